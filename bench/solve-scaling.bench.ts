/**
 * Solve time and iterations against the number of intervals (50 … 3,200) for the trapezoidal and
 * Hermite–Simpson transcriptions of the COPS-normalised Goddard rocket
 * (tests/schemes/fixtures/cops-goddard.json; Dolan, Moré and Munson, COPS 3.0, ANL/MCS-TM-273, 2004).
 *
 *   npx tsx bench/solve-scaling.bench.ts [--max N] [--repeats R]
 *
 * Prints per N: status, iterations, wall and process CPU seconds of the NLP solve (solveNlp, as in
 * solveProblem; transcription and recovery are not timed), best of R each (on a shared machine the
 * CPU figure is the one least inflated by other processes), seconds
 * per iteration, h(t_f), and the least-squares exponent p of time ≈ C N^p and of time per iteration
 * (target p < 1.2: the banded KKT structure allows linear work per iteration).
 *
 * Reference figures: MEASURED in this run (marked "m") when bench/side-by-side.bench.ts has built the
 * compiled reference (../shared/peers/goddard_ipopt.cpp) into the temp folder — one run of it per N,
 * right after ours, its own iteration count and solve time. Without it, the figures once quoted in
 * our issue (trapezoidal 21 iterations, 0.05 s at N = 100, 0.4 s at N = 800, 0.8 s at N = 3,200;
 * Hermite–Simpson 41 iterations, 0.2 s at N = 100, 1.9 s at N = 3,200), interpolated log-linearly
 * in N between quoted sizes (marked "~"); the side-by-side bench is the comparison to trust (same
 * start and problem form, alternating processes, memory). Ratios are ours ÷ reference. Goal: iteration ratio within [0.7, 1.3] (fewer is also fine) and time ratio ≤ 0.5 from
 * N = 400 up.
 */
import { existsSync, readFileSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { tmpdir } from "node:os";
import path from "node:path";
import { compileProblemSource } from "../app/engine/problem/compile";
import { getScheme } from "../app/engine/schemes/index";
import { solveNlp } from "../app/engine/nlp/index";
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

const REFERENCE_BINARY = path.join(tmpdir(), "arcwatch-goddard-ipopt");
/** One run of the compiled reference (built by bench/side-by-side.bench.ts), or null. */
function measuredReference(scheme: string, N: number): { s: number; iterations: number } | null {
  if (!existsSync(REFERENCE_BINARY)) return null;
  const r = spawnSync(REFERENCE_BINARY, [String(N), scheme === "trapezoidal" ? "trap" : "hs", "1"], { encoding: "utf8", env: { ...process.env, OPENBLAS_NUM_THREADS: "1" } });
  const line = (r.stdout ?? "").split("\n").find((l) => /^(trap|hs),/.test(l));
  if (r.status !== 0 || !line) return null;
  const f = line.split(",");
  return { s: Number(f[6]), iterations: Number(f[4]) };
}

/** Reference seconds at N: quoted, or log-linear inter/extrapolation between the nearest quoted sizes. */
function referenceSeconds(scheme: string, N: number): { s: number; quoted: boolean } {
  const q = REFERENCE[scheme].seconds;
  if (q[N] !== undefined) return { s: q[N], quoted: true };
  const ns = Object.keys(q).map(Number).sort((a, b) => a - b);
  let i = 0;
  while (i < ns.length - 2 && N > ns[i + 1]) i++;
  const [a, b] = [ns[i], ns[i + 1]];
  const p = Math.log(q[b] / q[a]) / Math.log(b / a);
  return { s: q[a] * (N / a) ** p, quoted: false };
}

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

/** One transcription and NLP solve; wall and CPU seconds of solveNlp alone. */
function run(scheme: SchemeId, N: number) {
  const tr = getScheme(scheme).transcribe(problem, { intervals: N });
  const c0 = process.cpuUsage();
  const result = solveNlp(tr.nlp);
  const c = process.cpuUsage(c0);
  const converged = result.status === "optimal" || result.status === "acceptable";
  const objective = converged ? tr.recover(result).objective : null;
  return { status: result.status, iterations: result.iterations, wall: result.seconds, cpu: (c.user + c.system) / 1e6, objective };
}

// JIT warm-up, not timed: a small and a mid-size solve per scheme (a long-running worker is warm;
// the first solves of a process also pay for compiling the solver's hot loops).
for (const scheme of ["trapezoidal", "hermite-simpson"] as SchemeId[]) for (const N of [50, 400]) run(scheme, N);

const Ns = [50, 100, 200, 400, 800, 1600, 3200].filter((n) => n <= maxN);
for (const scheme of ["trapezoidal", "hermite-simpson"] as SchemeId[]) {
  const ref = REFERENCE[scheme];
  console.log(`\n${scheme} on COPS Goddard (reference: ${ref.iterations} iterations)`);
  console.log("     N   status        iters  iter ratio   wall s    cpu s   cpu s/iter   h(tf)       ref s   wall ratio  cpu ratio");
  const times: number[] = [], perIter: number[] = [], okN: number[] = [];
  let goalIter = true, goalTime = true;
  for (const N of Ns) {
    let bestWall = Infinity, bestCpu = Infinity;
    let rep = null as ReturnType<typeof run> | null;
    for (let r = 0; r < repeats; r++) {
      const x = run(scheme, N);
      bestCpu = Math.min(bestCpu, x.cpu);
      if (x.wall < bestWall) {
        bestWall = x.wall;
        rep = x;
      }
    }
    const r = rep!;
    const it = Math.max(r.iterations, 1);
    const measuredRef = measuredReference(scheme, N);
    const { s: refS, quoted } = measuredRef ? { s: measuredRef.s, quoted: true } : referenceSeconds(scheme, N);
    const refIters = measuredRef?.iterations ?? ref.iterations;
    const converged = r.status === "optimal" || r.status === "acceptable";
    if (converged) {
      okN.push(N);
      times.push(bestCpu);
      perIter.push(bestCpu / it);
    }
    const iterRatio = r.iterations / refIters;
    if (!converged || iterRatio > 1.3) goalIter = false;
    if (N >= 400 && bestCpu / refS > 0.5) goalTime = false;
    console.log(
      `${String(N).padStart(6)}   ${r.status.padEnd(12)} ${String(r.iterations).padStart(6)} ${iterRatio.toFixed(2).padStart(10)} ${bestWall.toFixed(3).padStart(9)} ${bestCpu.toFixed(3).padStart(8)} ${(bestCpu / it).toExponential(2).padStart(11)}   ${r.objective?.toFixed(7) ?? "—".padEnd(9)}  ${(measuredRef ? "m" : quoted ? " " : "~") + refS.toFixed(2).padStart(5)} ${(bestWall / refS).toFixed(2).padStart(10)} ${(bestCpu / refS).toFixed(2).padStart(10)}`,
    );
  }
  if (okN.length >= 2) {
    console.log(`  fitted over the ${okN.length} converged solves (CPU): time ∝ N^${fit(okN, times).toFixed(2)}, time per iteration ∝ N^${fit(okN, perIter).toFixed(2)} (target < 1.2)`);
    const from400 = okN.map((n, i) => [n, i] as const).filter(([n]) => n >= 400);
    if (from400.length >= 2) console.log(`  from N = 400 up: time ∝ N^${fit(from400.map(([n]) => n), from400.map(([, i]) => times[i])).toFixed(2)}, time per iteration ∝ N^${fit(from400.map(([n]) => n), from400.map(([, i]) => perIter[i])).toFixed(2)}`);
  }
  console.log(`  goal: iterations within 30 % of the reference's at every N: ${goalIter ? "met" : "NOT met"}; CPU time ≤ 0.5 × reference from N = 400 up: ${goalTime ? "met" : "NOT met"}`);
}
