import { readFileSync } from "node:fs";
import { compileProblemSource } from "~/engine/problem/compile";
import { solveProblem } from "~/engine/solve";
const [name, s, N, K] = process.argv.slice(2);
const r = compileProblemSource(name, { problemJson: readFileSync(`tests/schemes/fixtures/${name}.json`, "utf8") });
if (!r.ok) { console.log(JSON.stringify(r.errors)); process.exit(1); }
const rep = solveProblem(r.problem, s as any, { intervals: +N, degree: K ? +K : undefined }, { keepTrajectory: false, nlp: { tol: 1e-10 } });
console.log(name, s, N, K ?? "", rep.status, rep.iterations, rep.solveSeconds.toFixed(2), "J", rep.objective, "tf", rep.finalTime, "err", rep.errors.objectiveAbs, "sw", rep.errors.switchingTimes);
