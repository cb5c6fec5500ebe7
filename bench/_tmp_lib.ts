import { loadLibrary } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";
import { SCHEME_IDS } from "~/engine/schemes";
const lib = loadLibrary("problems");
for (const p of lib.problems) for (const s of SCHEME_IDS) {
  const r = solveProblem(p, s, { intervals: p.defaults?.intervals ?? 40, degree: p.defaults?.degree }, { keepTrajectory: false, nlp: { maxIter: 400 } });
  console.log(p.id.padEnd(24), s.padEnd(16), r.status.padEnd(16), String(r.iterations).padStart(4), r.solveSeconds.toFixed(2).padStart(6), "rel", r.errors.objectiveRel?.toExponential(1), "x", r.errors.stateMax?.toExponential(1), "u", r.errors.controlMax?.toExponential(1), "miss", r.resim?.finalMiss.toExponential(1), "path", r.resim?.maxPathViolation.toExponential(1));
}
