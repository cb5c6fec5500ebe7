/**
 * A synthetic problem of any size for load tests and benchmarks (invented, no source): a chain
 * of n states, each pulled by its neighbours through sin(), driven by ⌈n/10⌉ controls, from all
 * ones to all zeros in 5 s with minimum control energy. It compiles and its NLP grows with n.
 */
export function chainProblem(n: number): string {
  const m = Math.ceil(n / 10);
  const states = Array.from({ length: n }, (_, i) => ({ name: `s${i + 1}`, scale: 1 }));
  const controls = Array.from({ length: m }, (_, j) => ({ name: `u${j + 1}`, lower: -10, upper: 10, scale: 1 }));
  const dynamics = Object.fromEntries(states.map((s, i) => [s.name, `${i > 0 ? `sin(s${i})` : "0"} - s${i + 1} + ${i + 1 < n ? `0.5*s${i + 2}` : "0"} + u${Math.floor(i / 10) + 1}`]));
  return JSON.stringify({
    format: "arcwatch-problem/1",
    title: `Load chain ${n}`,
    description: "Load tests only.",
    tags: [],
    constants: {},
    states,
    controls,
    dynamics,
    horizon: { initialTime: 0, finalTime: { fixed: 5 } },
    initial: Object.fromEntries(states.map((s) => [s.name, 1])),
    final: Object.fromEntries(states.map((s) => [s.name, 0])),
    objective: { sense: "min", running: controls.map((c) => `${c.name}^2`).join(" + ") },
    guess: { kind: "linear" },
    defaults: { intervals: 60, degree: 4 },
  });
}

/**
 * A problem within the trial size limits (40 states, 4 controls, short expressions) that is slow
 * to compile (invented, no source): `depth` intermediates, each a sum of four sines of a state
 * times the previous intermediate, and every dynamics uses the last one. Substituting the
 * intermediates and differentiating twice grows about fourfold per level. Measured on this
 * 2-core machine (process.cpuUsage, one compile, 2026-12-02): depth 6 0.7 s, 8 2.0 s, 9 5.8 s,
 * 10 22.6 s of CPU.
 */
export function nestedProblem(depth: number, title = `Nested intermediates ${depth}`): string {
  const n = 40;
  const states = Array.from({ length: n }, (_, i) => ({ name: `x${i + 1}` }));
  const controls = Array.from({ length: 4 }, (_, j) => ({ name: `u${j + 1}`, lower: -1, upper: 1 }));
  const intermediates = Array.from({ length: depth }, (_, k) => ({
    name: `w${k + 1}`,
    expr: Array.from({ length: 4 }, (_, j) => `sin(x${((k * 5 + j * 7) % n) + 1}${k > 0 ? `*w${k}` : ""})`).join(" + "),
  }));
  return JSON.stringify({
    format: "arcwatch-problem/1",
    title,
    description: "Load tests only: slow to compile, small to read.",
    tags: ["load-test"],
    constants: {},
    states,
    controls,
    intermediates,
    dynamics: Object.fromEntries(states.map((s, i) => [s.name, `w${depth} * ${s.name} + u${(i % 4) + 1}`])),
    horizon: { initialTime: 0, finalTime: { fixed: 1 } },
    initial: Object.fromEntries(states.map((s) => [s.name, 0])),
    objective: { sense: "min", running: controls.map((c) => `${c.name}^2`).join(" + ") },
    guess: { kind: "linear" },
  });
}
