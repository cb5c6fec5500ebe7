/**
 * Our own double integrator for tests that add a problem: minimise ∫u²/2 from (0,0) to (1,0) in 1 s;
 * J* = 6 with u = 6 − 12t (worked by hand: the Euler–Lagrange equations give a linear control).
 */
export function restToRestProblem(title: string, description: string, tag: string) {
  return {
    format: "arcwatch-problem/1",
    title,
    description,
    tags: ["smooth", tag],
    constants: { umax: 20 },
    states: [{ name: "x", unit: "m" }, { name: "v", unit: "m/s" }],
    controls: [{ name: "u", unit: "m/s^2", lower: "-umax", upper: "umax" }],
    dynamics: { x: "v", v: "u" },
    horizon: { initialTime: 0, finalTime: { fixed: 1 } },
    initial: { x: 0, v: 0 },
    final: { x: 1, v: 0 },
    objective: { sense: "min", running: "u^2/2" },
    guess: { kind: "linear" },
    reference: { objective: { value: 6, tolerance: 1e-9, provenance: { kind: "analytic", detail: "u = 6 − 12t, J = 6" } } },
  };
}
