import { readProblemFiles } from "~/engine/problem/load";
import { compileProblemSource } from "~/engine/problem/compile";
import { solveProblem } from "~/engine/solve";
const files = readProblemFiles("problems/kestrel-2-ascent")!;
for (const q of process.argv.slice(2)) {
  const j = JSON.parse(files.problemJson ?? (files as any)["problem.json"]);
  j.constants.qmax = Number(q);
  const f2: any = { ...files }; for (const k of Object.keys(f2)) if (typeof f2[k] === "string" && f2[k].includes('"format"')) f2[k] = JSON.stringify(j);
  const r = compileProblemSource("k", f2); if (!r.ok) { console.log(r.errors); continue; }
  const rep = solveProblem(r.problem, "lgr", { intervals: 30, degree: 5 });
  const tr = rep.trajectory!;
  console.log("qmax", q, rep.status, rep.objective, rep.finalTime);
  const line: string[] = [];
  for (let k = 0; k < tr.tu.length; k += 3) { const h = tr.states.h[k], v = tr.states.v[k]; const qq = 0.5 * v * v * Math.exp(-450 * (h - 1)); line.push(`${tr.tu[k].toFixed(3)}:${tr.controls.T[k].toFixed(2)}/${(qq / Number(q)).toFixed(2)}`); }
  console.log(line.join(" "));
}
