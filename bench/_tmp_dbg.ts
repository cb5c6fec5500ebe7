import { loadProblem } from "~/engine/problem/load";
import { solveNlp } from "~/engine/nlp";
import { getScheme } from "~/engine/schemes";
const r = loadProblem("tern-orbit-raise"); if (!r.ok) throw 1;
const tr = getScheme(process.argv[2]).transcribe(r.problem, { intervals: 10, degree: 4 });
const sol = tr.recover(solveNlp(tr.nlp));
const u = new Float64Array(2); let worst = 0, wt = 0;
for (let k = 0; k <= 3000; k++) { const t = 3 * k / 3000; sol.controlAt(t, u); const v = u[0] ** 2 + u[1] ** 2 - 1; if (v > worst) { worst = v; wt = t; } }
console.log("max violation of interpolated control", worst, "at", wt);
