/**
 * Adaptive refinement against the uniform mesh that meets the same tolerance, per problem and
 * scheme: mesh points, passes, NLP iterations and seconds of each, and the ratios refined ÷ uniform.
 *
 *   npx tsx bench/mesh-refinement.bench.ts
 *
 * The uniform mesh is the smallest with N growing by 10 % from the initial mesh whose largest
 * error estimate (app/engine/mesh/estimate.ts) is within ε; its cost counts only the final solve,
 * the refined cost all passes (so the time ratio favours uniform). Timings on a shared machine are
 * noisy; points and iterations are not.
 */
import { loadProblem } from "../app/engine/problem/load";
import { solveProblem } from "../app/engine/solve";
import { meshPoints, solveAdaptive } from "../app/engine/mesh/adaptive";
import type { Mesh, SchemeId } from "../app/engine/schemes/types";

const CASES: Array<{ id: string; scheme: SchemeId; initial: Mesh; eps: number }> = [
  { id: "wren-wheel-spin-down", scheme: "trapezoidal", initial: { intervals: 10 }, eps: 1e-6 },
  { id: "wren-wheel-spin-down", scheme: "hermite-simpson", initial: { intervals: 10 }, eps: 1e-8 },
  { id: "tiercel-upper-stage", scheme: "trapezoidal", initial: { intervals: 10 }, eps: 1e-6 },
  { id: "tiercel-upper-stage", scheme: "hermite-simpson", initial: { intervals: 10 }, eps: 1e-8 },
  { id: "tiercel-upper-stage", scheme: "lgr", initial: { intervals: 4, degree: 4 }, eps: 1e-8 },
  { id: "tern-orbit-raise", scheme: "hermite-simpson", initial: { intervals: 10 }, eps: 1e-7 },
  { id: "tern-orbit-raise", scheme: "lgr", initial: { intervals: 4, degree: 4 }, eps: 1e-7 },
  { id: "pika-rover-dash", scheme: "trapezoidal", initial: { intervals: 15 }, eps: 1e-6 },
  { id: "pika-rover-dash", scheme: "lgr", initial: { intervals: 5, degree: 4 }, eps: 1e-6 },
];

const quiet = { resimulate: false, arcs: false, keepTrajectory: false } as const;
const pad = (s: string | number, n: number) => String(s).padStart(n);

console.log("problem                  scheme            ε      refined: points passes iters   s   | uniform: points iters   s   | points ratio  time ratio");
for (const c of CASES) {
  const r = loadProblem(c.id);
  if (!r.ok) throw new Error(`${c.id} does not load`);
  const p = r.problem;
  const ad = solveAdaptive(p, c.scheme, c.initial, { ...quiet, tolerance: c.eps });
  const last = ad.passes[ad.passes.length - 1];
  let uniform: { points: number; iterations: number; seconds: number } | null = null;
  for (let N = c.initial.intervals; N <= 4000; N = Math.max(N + 1, Math.round(N * 1.1))) {
    const mesh: Mesh = c.initial.degree ? { intervals: N, degree: c.initial.degree } : { intervals: N };
    const t0 = performance.now();
    const u = solveProblem(p, c.scheme, mesh, quiet);
    const seconds = (performance.now() - t0) / 1000;
    if (u.meshEstimate && u.meshEstimate.max <= c.eps) {
      uniform = { points: meshPoints(c.scheme, mesh), iterations: u.iterations, seconds };
      break;
    }
  }
  const line =
    `${c.id.padEnd(24)} ${c.scheme.padEnd(16)} ${c.eps.toExponential(0).padStart(6)}  ${ad.met ? "   " : "NOT"} ${pad(last.points, 6)} ${pad(ad.passes.length, 6)} ${pad(ad.totalIterations, 5)} ${ad.totalSeconds.toFixed(2).padStart(6)} |` +
    (uniform
      ? `        ${pad(uniform.points, 6)} ${pad(uniform.iterations, 5)} ${uniform.seconds.toFixed(2).padStart(6)} | ${(last.points / uniform.points).toFixed(2).padStart(11)} ${(ad.totalSeconds / uniform.seconds).toFixed(2).padStart(11)}`
      : "        (no uniform mesh up to 4000 intervals met ε)");
  console.log(line);
}
