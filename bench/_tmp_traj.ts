import { loadProblem } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
const [id, s, N, K] = process.argv.slice(2);
const r = loadProblem(id); if (!r.ok) throw 1;
const rep = solveProblem(r.problem, s as any, { intervals: +N, degree: K ? +K : undefined });
const tr = rep.trajectory!;
console.log(rep.status, rep.objective, rep.finalTime, rep.iterations);
const step = Math.max(1, Math.floor(tr.t.length / 30));
for (let k = 0; k < tr.tu.length; k += step) console.log(tr.tu[k].toFixed(4), Object.values(tr.controls).map(c => c[k].toFixed(4)).join(" "), "|", Object.entries(tr.states).map(([n, c]) => n + "=" + (c[k] ?? NaN).toPrecision(5)).join(" "));
