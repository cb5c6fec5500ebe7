/**
 * The Arcwatch side of bench/side-by-side.bench.ts: one process, one solve (after a JIT warm-up), a
 * JSON line on stdout. Run from an esbuild bundle (bench/side-by-side.bench.ts builds it), so that the
 * process holds the engine and nothing of a TypeScript loader; also runnable from source:
 *
 *   node --import tsx bench/side-by-side-child.ts N trapezoidal|hermite-simpson [warm] [--fixture path]
 *
 * N = 0 loads everything without solving (the "loaded" memory figure). "warm" adds the third solve's
 * CPU and the steady CPU (below). ARCWATCH_GAP_TOL sets the
 * solver's gapTol (0: the stop without the duality-gap test). ARCWATCH_PRINT=1 prints the
 * iteration log of the timed solve; ARCWATCH_PROFILE=file writes a CPU profile of the timed (warm when
 * asked) solve only, through node:inspector, so that loading and the warm-up do not dilute it
 * (with ARCWATCH_PROFILE_STEADY=1 also set: the last steady solve instead).
 */
import { writeFileSync } from "node:fs";
import { copsGoddardFromCopsStart, COPS_GODDARD_FIXTURE } from "./side-by-side-problem";
import { getScheme } from "../app/engine/schemes/index";
import { solveNlp } from "../app/engine/nlp/index";
import { clearAnalysisCache } from "../app/engine/sparse/index";

const args = process.argv.slice(2);
const fixtureAt = args.indexOf("--fixture");
const fixturePath = fixtureAt >= 0 ? args[fixtureAt + 1]! : COPS_GODDARD_FIXTURE;
const N = Number(args[0]);
const scheme = args[1] as "trapezoidal" | "hermite-simpson";
const warm = args[2] === "warm";
if (!Number.isInteger(N) || N < 0 || (scheme !== "trapezoidal" && scheme !== "hermite-simpson")) {
  console.error(`side-by-side child: usage N trapezoidal|hermite-simpson [warm] [--fixture path], got ${args.join(" ")}`);
  process.exit(2);
}

const problem = copsGoddardFromCopsStart(fixturePath);

/** ARCWATCH_GAP_TOL=0: the former stop without the duality-gap test (like for like with the reference's stop). */
const gapTol = process.env.ARCWATCH_GAP_TOL ? Number(process.env.ARCWATCH_GAP_TOL) : null;
if (gapTol !== null && !(gapTol >= 0)) throw new Error(`side-by-side child: ARCWATCH_GAP_TOL must be a number ≥ 0, got ${process.env.ARCWATCH_GAP_TOL}`);

interface Measured { iterations: number; status: string; message?: string; seconds: number; cpuSeconds: number; objective: number | null; warmCpuSeconds?: number; steadyCpuSeconds?: number }

/**
 * "steady": the best CPU of solves STEADY_FROM … STEADY_TO of the same N in one process, each after
 * emptying the analysis cache: the engine once V8 has compiled its hot code with full type feedback,
 * which is where a solver-pool or bench worker runs after its first few solves (the cold and
 * third-solve figures still carry tier-up and compilation; see DEVELOPERS.md, "cold, warm and
 * steady"). ARCWATCH_STEADY_SOLVES sets STEADY_TO (default 14; 3 or less skips it). Up to solve 8
 * (the default until 2026-12-04) the solves still carried V8's compilation on the second core: CPU
 * 1.1–1.5× wall at trapezoidal N = 1,600 and 3,200, CPU ≈ wall from about the 10th solve on
 * (DEVELOPERS.md, "The steady figure reached past the tier-up tail").
 */
const STEADY_FROM = 4;
const STEADY_TO = Number(process.env.ARCWATCH_STEADY_SOLVES ?? 14);
if (!Number.isInteger(STEADY_TO)) throw new Error(`side-by-side child: ARCWATCH_STEADY_SOLVES must be an integer, got ${process.env.ARCWATCH_STEADY_SOLVES}`);

const profileFile = process.env.ARCWATCH_PROFILE ?? "";
async function profiled<T>(on: boolean, f: () => T): Promise<T> {
  if (!on || !profileFile) return f();
  const { Session } = await import("node:inspector/promises");
  const s = new Session();
  s.connect();
  await s.post("Profiler.enable");
  await s.post("Profiler.setSamplingInterval", { interval: 200 });
  await s.post("Profiler.start");
  const out = f();
  const { profile } = await s.post("Profiler.stop");
  writeFileSync(profileFile, JSON.stringify(profile));
  s.disconnect();
  return out;
}

function run(n: number): Measured {
  const tr = getScheme(scheme).transcribe(problem, { intervals: n });
  const c0 = process.cpuUsage();
  const r = solveNlp(tr.nlp, { tol: 1e-8, printLevel: n === N && process.env.ARCWATCH_PRINT ? 1 : 0, ...(gapTol !== null ? { gapTol } : {}) });
  const c1 = process.cpuUsage(c0);
  const ok = r.status === "optimal" || r.status === "acceptable";
  return { iterations: r.iterations, status: r.status, message: r.message, seconds: r.seconds, cpuSeconds: (c1.user + c1.system) / 1e6, objective: ok ? tr.recover(r).objective : null };
}

let out: Measured = { iterations: 0, status: "loaded", seconds: 0, cpuSeconds: 0, objective: null };
if (N > 0) {
  run(50);
  out = await profiled(!warm, () => run(N));
  if (warm) {
    // Warm: the third solve of this N in the process, the symbolic-analysis cache emptied first so
    // that the analysis is paid as in the cold solve (a bench worker's timed repeats would reuse it).
    run(N);
    clearAnalysisCache();
    const w = await profiled(!process.env.ARCWATCH_PROFILE_STEADY, () => run(N));
    out = { ...out, warmCpuSeconds: w.cpuSeconds };
    if (STEADY_TO >= STEADY_FROM) {
      let steady = Infinity;
      for (let k = STEADY_FROM; k <= STEADY_TO; k++) {
        clearAnalysisCache();
        const s = await profiled(k === STEADY_TO && !!process.env.ARCWATCH_PROFILE_STEADY, () => run(N));
        steady = Math.min(steady, s.cpuSeconds);
      }
      out = { ...out, steadyCpuSeconds: steady };
    }
  }
}
process.stdout.write(JSON.stringify(out) + "\n");
process.exit(0);
