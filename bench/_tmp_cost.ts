import { loadProblem } from "~/engine/problem/load";
import { solveNlp } from "~/engine/nlp";
import { getScheme } from "~/engine/schemes";
const r = loadProblem("wren-wheel-spin-down");
if (!r.ok) throw new Error("load");
const a = 0.4, x0 = 2, T = 5, beta = Math.sqrt(a * a + 1), den = beta * Math.cosh(beta * T) - a * Math.sinh(beta * T);
const p = (t: number) => (x0 * Math.sinh(beta * (T - t))) / den;
const xa = (t: number) => (x0 * (beta * Math.cosh(beta * (T - t)) - a * Math.sinh(beta * (T - t)))) / den;
for (const s of ["euler", "trapezoidal", "hermite-simpson", "rk4-shooting", "lgr"]) {
  const line: string[] = [];
  for (const N of [10, 20, 40, 80]) {
    const tr = getScheme(s).transcribe(r.problem, { intervals: s === "lgr" ? N / 10 : N, degree: 4 });
    const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-12 }));
    let e = 0; for (let k = 0; k < sol.tLambda!.length; k++) e = Math.max(e, Math.abs(sol.costates![0][k] - p(sol.tLambda![k])));
    let ex = 0; const o = new Float64Array(1); for (let k = 0; k <= 200; k++) { const t = 5 * k / 200; sol.stateAt(t, o); ex = Math.max(ex, Math.abs(o[0] - xa(t))); }
    line.push(`N=${N} J=${(sol.objective - 2.953868428478661).toExponential(2)} x=${ex.toExponential(2)} p=${e.toExponential(2)}`);
  }
  console.log(s, line.join(" | "));
}
