/**
 * Solve time and iterations against the number of intervals (50 … 3,200) for the trapezoidal and
 * Hermite–Simpson transcriptions of the COPS-normalised Goddard rocket
 * (tests/schemes/fixtures/cops-goddard.json; Dolan, Moré and Munson, COPS 3.0, ANL/MCS-TM-273, 2004).
 *
 *   npx tsx bench/solve-scaling.bench.ts [--max N] [--repeats R]
 *
 * Prints per N: iterations, solve seconds (best of R), seconds per iteration, and the least-squares
 * exponent p of time ≈ C N^p and of time/iteration (target: p < 1.2, the banded KKT structure
 * allows linear work per iteration). Compares with the reference figures quoted in our issue for a
 * compiled interior-point solver with a multifrontal linear solver and exact Hessian on this kind of
 * machine (trapezoidal: 21 iterations, 0.05 s at N = 100, 0.4 s at N = 800, 0.8 s at N = 3,200;
 * Hermite–Simpson: 41 iterations, 0.2 s at N = 100, 1.9 s at N = 3,200) and prints our ratios
 * (goal: iterations within 30 %, at most half the wall time from N = 400 up).
 */
import { readFileSync } from "node:fs";
import { compileProblemSource } from "../app/engine/problem/compile";
import { solveProblem } from "../app/engine/solve";
import type { SchemeId } from "../app/engine/schemes/types";

const argv = process.argv.slice(2);
const opt = (name: string, dflt: number) => {
  const i = argv.indexOf(name);
  return i >= 0 ? Number(argv[i + 1]) : dflt;
};
const maxN = opt("--max", 3200);
const repeats = opt("--repeats", 1);

const json = readFileSync(new URL("../tests/schemes/fixtures/cops-goddard.json", import.meta.url), "utf8");
const compiled = compileProblemSource("cops-goddard", { problemJson: json });
if (!compiled.ok) throw new Error("cops-goddard fixture does not compile");
const problem = compiled.problem;

const REFERENCE: Record<string, { iterations: number; seconds: Record<number, number> }> = {
  trapezoidal: { iterations: 21, seconds: { 100: 0.05, 800: 0.4, 3200: 0.8 } },
  "hermite-simpson": { iterations: 41, seconds: { 100: 0.2, 3200: 1.9 } },
};

function fit(N: number[], y: number[]): number {
  const x = N.map(Math.log), ly = y.map(Math.log);
  const mx = x.reduce((a, b) => a + b) / x.length, my = ly.reduce((a, b) => a + b) / ly.length;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < x.length; i++) {
    sxy += (x[i] - mx) * (ly[i] - my);
    sxx += (x[i] - mx) ** 2;
  }
  return sxy / sxx;
}

const Ns = [50, 100, 200, 400, 800, 1600, 3200].filter((n) => n <= maxN);
for (const scheme of ["trapezoidal", "hermite-simpson"] as SchemeId[]) {
  console.log(`\n${scheme} on COPS Goddard`);
  console.log("     N   status        iters   seconds   s/iter    h(tf)        ref iters  ref s   iters ratio  time ratio");
  const times: number[] = [], perIter: number[] = [], okN: number[] = [];
  for (const N of Ns) {
    let best = Infinity;
    let rep = null as ReturnType<typeof solveProblem> | null;
    for (let r = 0; r < repeats; r++) {
      const x = solveProblem(problem, scheme, { intervals: N }, { keepTrajectory: false, resimulate: false });
      if (x.solveSeconds < best) {
        best = x.solveSeconds;
        rep = x;
      }
    }
    const ref = REFERENCE[scheme];
    const refS = ref.seconds[N];
    if (rep!.status === "optimal" || rep!.status === "acceptable") {
      okN.push(N);
      times.push(best);
      perIter.push(best / Math.max(rep!.iterations, 1));
    }
    console.log(
      `${String(N).padStart(6)}   ${rep!.status.padEnd(12)} ${String(rep!.iterations).padStart(6)} ${best.toFixed(3).padStart(9)} ${(best / Math.max(rep!.iterations, 1)).toExponential(2).padStart(9)}   ${rep!.objective?.toFixed(7) ?? "—"}   ${String(ref.iterations).padStart(6)}  ${refS !== undefined ? refS.toFixed(2).padStart(5) : "    —"}   ${(rep!.iterations / ref.iterations).toFixed(2).padStart(8)}   ${refS !== undefined ? (best / refS).toFixed(2).padStart(9) : "        —"}`,
    );
  }
  if (okN.length >= 2) {
    console.log(`  fitted over the ${okN.length} converged solves: time ∝ N^${fit(okN, times).toFixed(2)}, time per iteration ∝ N^${fit(okN, perIter).toFixed(2)} (target < 1.2)`);
    const from400 = okN.map((n, i) => [n, i] as const).filter(([n]) => n >= 400);
    if (from400.length >= 2) console.log(`  from N = 400 up: time ∝ N^${fit(from400.map(([n]) => n), from400.map(([, i]) => times[i])).toFixed(2)}, time per iteration ∝ N^${fit(from400.map(([n]) => n), from400.map(([, i]) => perIter[i])).toFixed(2)}`);
  }
}
