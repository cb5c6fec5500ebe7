import { compileProblemSource } from "~/engine/problem/compile";
const d = Number(process.argv[2]), w = 4, n = 40;
const states = Array.from({ length: n }, (_, i) => ({ name: `x${i + 1}` }));
const controls = Array.from({ length: 4 }, (_, j) => ({ name: `u${j + 1}`, lower: -1, upper: 1 }));
const inter: { name: string; expr: string }[] = [];
for (let k = 0; k < d; k++) { const prev = k === 0 ? null : `w${k}`; inter.push({ name: `w${k + 1}`, expr: Array.from({ length: w }, (_, j) => `sin(x${((k * 5 + j * 7) % n) + 1}${prev ? `*${prev}` : ""})`).join(" + ") }); }
const dyn: Record<string, string> = {};
for (let i = 0; i < n; i++) dyn[`x${i + 1}`] = `w${d} * x${i + 1} + u${(i % 4) + 1}`;
const json = JSON.stringify({ format: "arcwatch-problem/1", title: "slow", description: "d", tags: [], constants: {}, states, controls, intermediates: inter, dynamics: dyn,
    horizon: { initialTime: 0, finalTime: { fixed: 1 } }, initial: Object.fromEntries(states.map((s) => [s.name, 0])),
    objective: { sense: "min", running: controls.map((c) => `${c.name}^2`).join("+") }, guess: { kind: "linear" } });
const c0 = process.cpuUsage();
const r = compileProblemSource("x", { problemJson: json });
const c = process.cpuUsage(c0);
console.log(d, r.ok ? "ok" : JSON.stringify(r.errors).slice(0, 300), ((c.user + c.system) / 1000).toFixed(0), "ms CPU", process.memoryUsage().heapUsed/1e6|0, "MB");
