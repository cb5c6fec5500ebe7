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
