import { loadLibrary } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
import { SCHEME_IDS } from "~/engine/schemes";
const lib = loadLibrary("problems");
const only = process.argv[2];
const schemesArg = process.argv[3] ? process.argv[3].split(",") : SCHEME_IDS;
for (const p of lib.problems) {
  if (only && only !== "all" && p.id !== only) continue;
  for (const s of schemesArg as any[]) {
    const N = s === "lgr" ? Math.max(1, Math.round((p as any).defaults?.intervals ?? 40) / 4) : 40;
    const r = solveProblem(p, s, { intervals: s === "lgr" ? 10 : 40, degree: 4 }, { keepTrajectory: false });
    console.log(p.id.padEnd(24), s.padEnd(16), r.status.padEnd(18), String(r.iterations).padStart(4), r.solveSeconds.toFixed(2).padStart(6), "J", r.objective?.toPrecision(10), "tf", r.finalTime?.toPrecision(8), "dJ", r.errors.objectiveRel?.toExponential(1), "xerr", r.errors.stateMax?.toExponential(1), "miss", r.resim?.finalMiss.toExponential(1), "path", r.resim?.maxPathViolation.toExponential(1));
  }
}
