/**
 * Empirical convergence orders on a smooth problem with a closed-form solution: the scalar LQ
 * fixture (x' = u, J = ½∫(x² + u²), T = 1; x = cosh(1 − t)/cosh 1, costate p = sinh(1 − t)/cosh 1,
 * J = tanh(1)/2 — Bryson and Ho, Applied Optimal Control, 1975, §5.2). Orders are least-squares
 * slopes of log error against log N over N = 8, 16, 32, 64 (errors at the scheme's own grid points).
 *
 * Expected (theory, with ±0.25–0.4 allowed for the fit):
 *   Euler 1 (Dontchev and Hager, Math. Comp. 70, 2001); trapezoidal 2; Hermite–Simpson 4 for states
 *   and objective (Betts, Practical Methods for Optimal Control..., SIAM 2010, §4.6.8), and 4 for the
 *   costate reconstructed from the Simpson multipliers (interval averages, interval-averages.ts); RK4 4 for states, objective and costate (Hager, Numer.
 *   Math. 87, 2000). LGR: error falls faster than any power of K until round-off (Garg et al.,
 *   Automatica 46(11), 2010): the log–log slope keeps growing with K and the error reaches 1e-12.
 */
import { describe, expect, it } from "vitest";
import { getScheme } from "~/engine/schemes";
import { solveNlp } from "~/engine/nlp";
import type { SchemeId } from "~/engine/schemes/types";
import { fittedOrder, fixture } from "./helpers/fixtures";

const problem = fixture("lq-scalar");
const Jexact = Math.tanh(1) / 2;
const xa = (t: number) => Math.cosh(1 - t) / Math.cosh(1);
const pa = (t: number) => Math.sinh(1 - t) / Math.cosh(1);

function errors(scheme: SchemeId, N: number, K?: number) {
  const tr = getScheme(scheme).transcribe(problem, { intervals: N, degree: K });
  const res = solveNlp(tr.nlp, { tol: 1e-13, acceptableTol: 1e-11 });
  expect(["optimal", "acceptable"]).toContain(res.status);
  const sol = tr.recover(res);
  let ex = 0, ep = 0;
  sol.t.forEach((t, k) => (ex = Math.max(ex, Math.abs(sol.states[0][k] - xa(t)))));
  sol.tLambda!.forEach((t, k) => (ep = Math.max(ep, Math.abs(sol.costates![0][k] - pa(t)))));
  return { J: Math.abs(sol.objective - Jexact), x: ex, p: ep };
}

const Ns = [8, 16, 32, 64];
const expected: Array<{ scheme: SchemeId; J: [number, number]; x: [number, number]; p: [number, number] }> = [
  { scheme: "euler", J: [0.8, 1.25], x: [0.8, 1.25], p: [0.75, 1.25] },
  { scheme: "trapezoidal", J: [1.75, 2.25], x: [1.75, 2.25], p: [1.75, 2.25] },
  { scheme: "hermite-simpson", J: [3.6, 4.4], x: [3.6, 4.4], p: [3.5, 4.5] },
  { scheme: "rk4-shooting", J: [3.6, 4.4], x: [3.6, 4.4], p: [3.6, 4.4] },
];

describe("convergence orders on the LQ problem", () => {
  for (const e of expected) {
    it(`${e.scheme}: objective ${e.J.join("–")}, states ${e.x.join("–")}, costates ${e.p.join("–")}`, () => {
      const r = Ns.map((N) => errors(e.scheme, N));
      const oJ = fittedOrder(Ns, r.map((v) => v.J));
      const ox = fittedOrder(Ns, r.map((v) => v.x));
      const op = fittedOrder(Ns, r.map((v) => v.p));
      expect(oJ).toBeGreaterThan(e.J[0]);
      expect(oJ).toBeLessThan(e.J[1]);
      expect(ox).toBeGreaterThan(e.x[0]);
      expect(ox).toBeLessThan(e.x[1]);
      expect(op).toBeGreaterThan(e.p[0]);
      expect(op).toBeLessThan(e.p[1]);
    });
  }

  it("LGR (one interval): faster than any power of K until round-off", () => {
    const Ks = [2, 4, 8, 12];
    const r = Ks.map((K) => errors("lgr", 1, K));
    const slope = (a: number, b: number, ea: number, eb: number) => Math.log(ea / eb) / Math.log(b / a);
    // log–log slope of the state error grows with K (exponential convergence)
    const s1 = slope(2, 4, r[0].x, r[1].x), s2 = slope(4, 8, r[1].x, r[2].x);
    expect(s2).toBeGreaterThan(s1 + 5);
    expect(r[2].x).toBeLessThan(1e-10);
    expect(r[3].x).toBeLessThan(1e-12);
    expect(r[3].J).toBeLessThan(1e-12);
    // costate estimate Λ/w converges spectrally too
    expect(slope(4, 8, r[1].p, r[2].p)).toBeGreaterThan(slope(2, 4, r[0].p, r[1].p) + 3);
    expect(r[3].p).toBeLessThan(1e-10);
  });

  it("LGR multi-interval (K = 3): h-refinement order ≥ 3.5 for the states", () => {
    const N = [1, 2, 4, 8];
    const r = N.map((n) => errors("lgr", n, 3));
    expect(fittedOrder(N, r.map((v) => v.x))).toBeGreaterThan(3.5);
    expect(fittedOrder(N, r.map((v) => v.p))).toBeGreaterThan(2.5);
  });
});
