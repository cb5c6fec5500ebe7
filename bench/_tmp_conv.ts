import { getScheme } from "~/engine/schemes";
import { solveNlp } from "~/engine/nlp";
import { fixture, fittedOrder } from "../tests/schemes/helpers/fixtures";
const p = fixture("lq-scalar");
const J = Math.tanh(1) / 2, xa = (t: number) => Math.cosh(1 - t) / Math.cosh(1), pa = (t: number) => Math.sinh(1 - t) / Math.cosh(1);
const run = (s: string, N: number, K?: number) => {
  const tr = getScheme(s).transcribe(p, { intervals: N, degree: K });
  const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-13, acceptableTol: 1e-11 }));
  let ex = 0; sol.t.forEach((t, k) => ex = Math.max(ex, Math.abs(sol.states[0][k] - xa(t))));
  let ep = 0; sol.tLambda!.forEach((t, k) => ep = Math.max(ep, Math.abs(sol.costates![0][k] - pa(t))));
  return { eJ: Math.abs(sol.objective - J), ex, ep };
};
for (const s of ["euler", "trapezoidal", "hermite-simpson", "rk4-shooting"]) {
  const Ns = [8, 16, 32, 64]; const r = Ns.map(N => run(s, N));
  console.log(s, "J", fittedOrder(Ns, r.map(x => x.eJ)).toFixed(2), "x", fittedOrder(Ns, r.map(x => x.ex)).toFixed(2), "p", fittedOrder(Ns, r.map(x => x.ep)).toFixed(2), r.map(x => x.eJ.toExponential(1) + "/" + x.ex.toExponential(1) + "/" + x.ep.toExponential(1)).join(" "));
}
for (const K of [2, 3, 4, 5, 6, 8, 10, 12]) { const r = run("lgr", 1, K); console.log("lgr K", K, r.eJ.toExponential(2), r.ex.toExponential(2), r.ep.toExponential(2)); }
for (const N of [1, 2, 4, 8]) { const r = run("lgr", N, 3); console.log("lgr N", N, "K3", r.eJ.toExponential(2), r.ex.toExponential(2), r.ep.toExponential(2)); }
