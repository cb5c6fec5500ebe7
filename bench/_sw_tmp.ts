import { loadProblem } from "../app/engine/problem/load";
import { solveProblem } from "../app/engine/solve";
const id = process.argv[2];
const schemes = process.argv[3].split(",");
const meshes = process.argv[4].split(",").map(Number);
const r = loadProblem(id);
if (!r.ok) throw new Error("load");
for (const s of schemes) {
  const row: string[] = [];
  for (const N of meshes) {
    const rep = solveProblem(r.problem, s as any, { intervals: N, degree: s === "lgr" ? 4 : undefined }, { resimulate: false });
    row.push(`${N}: obj ${rep.errors.objectiveAbs?.toExponential(2)} sw ${rep.errors.switchingTimes?.toExponential(2)}`);
  }
  console.log(s, row.join(" | "));
}
