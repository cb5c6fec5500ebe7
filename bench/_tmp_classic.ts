import { readFileSync } from "node:fs";
import { compileProblemSource } from "~/engine/problem/compile";
import { solveProblem } from "~/engine/solve";
const plan: Record<string, Record<string, [number, number?]>> = {
  "cops-goddard": { euler: [200], trapezoidal: [400], "hermite-simpson": [100], "rk4-shooting": [100], lgr: [20, 6] },
  "bryson-denham": { euler: [100], trapezoidal: [50], "hermite-simpson": [50], "rk4-shooting": [50], lgr: [10, 4] },
  "bryson-ho-orbit-raising": { euler: [100], trapezoidal: [50], "hermite-simpson": [30], "rk4-shooting": [30], lgr: [10, 6] },
  brachistochrone: { euler: [100], trapezoidal: [40], "hermite-simpson": [20], "rk4-shooting": [20], lgr: [4, 6] },
  "lq-scalar": { euler: [100], trapezoidal: [40], "hermite-simpson": [10], "rk4-shooting": [10], lgr: [1, 10] },
  "double-integrator-min-time": { euler: [40], trapezoidal: [40], "hermite-simpson": [40], "rk4-shooting": [40], lgr: [10, 4] },
};
const only = process.argv[2];
for (const [name, m] of Object.entries(plan)) {
  if (only && name !== only) continue;
  const r = compileProblemSource(name, { problemJson: readFileSync(`tests/schemes/fixtures/${name}.json`, "utf8") });
  if (!r.ok) throw new Error(name);
  for (const [s, [N, K]] of Object.entries(m)) {
    const rep = solveProblem(r.problem, s as any, { intervals: N, degree: K }, { keepTrajectory: false, resimulate: false });
    console.log(name.padEnd(28), s.padEnd(16), String(N).padStart(4), rep.status, rep.iterations, rep.solveSeconds.toFixed(2), "J", rep.objective?.toPrecision(10), "err", rep.errors.objectiveAbs?.toExponential(2), "sw", rep.errors.switchingTimes?.toExponential(2) ?? "", "tf", rep.finalTime?.toPrecision(8));
  }
}
