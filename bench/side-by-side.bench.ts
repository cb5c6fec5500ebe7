/**
 * Side by side with a compiled interior-point solver on the same problem, transcription and start.
 *
 *   npx tsx bench/side-by-side.bench.ts [--max N] [--min N] [--reps R] [--schemes trapezoidal,hermite-simpson] [--no-matched]
 *
 * The reference program is ../shared/peers/goddard_ipopt.cpp (COPS 3.0 Goddard rocket, Dolan, Moré and
 * Munson, ANL/MCS-TM-273, 2004, with Debian's IPOPT 3.11 + MUMPS, exact derivatives; how it is built
 * and run: ../shared/peers/README.md). This script builds it into the system temp folder when
 * pkg-config finds the library, and otherwise prints how to install it and measures Arcwatch alone.
 *
 * Both sides solve the same NLP: trapezoidal or separated Hermite–Simpson defects of the COPS Goddard
 * rocket (tests/schemes/fixtures/cops-goddard.json with every scale 1 and t_f ∈ [0.001, 10] (the reference has t_f ≥ 0; neither bound is active), as the
 * reference's t_f ≥ 0), N uniform intervals, from the COPS start h = 1, v = s(1 − s), m = 1 − 0.4 s,
 * T = 1.75, t_f = 1 (s = t/t_f), tolerance 1e-8 on the scaled KKT error. Arcwatch runs with its
 * defaults otherwise (including the duality-gap test, app/engine/nlp/gap.ts, which the reference does
 * not have: its extra iterations are counted against Arcwatch; ARCWATCH_GAP_TOL=0 turns it off for a
 * like-for-like stop, passed on to the child).
 *
 * For each N the two programs run ALTERNATELY, R times each, each in its own process (so that the
 * interleaving shares the machine's load between them), best of R:
 *  - iterations and status;
 *  - time: the reference's own solve (its optimisation call, library set-up included, model
 *    construction excluded) and Arcwatch's solveNlp (symbolic analysis included, transcription
 *    excluded), after one untimed N = 50 solve in the same process (JIT warm-up; a long-running
 *    bench worker is warm); both as wall seconds and as process CPU seconds (user + system: the
 *    reference's getrusage around its call, ours process.cpuUsage around solveNlp). The CPU figure
 *    is the one a loaded machine inflates least; the time ratio and "best of R" use it. "warm": the
 *    CPU seconds of the third solve of the same N in the same process, with the symbolic-analysis
 *    cache emptied before it (so the analysis is paid again): the engine's steady cost once the JIT
 *    has compiled it for this size, as in a bench worker after its warm-up solves (measured in a
 *    process of its own, so that the memory columns stay those of the cold solve;
 *    ARCWATCH_COLD_ONLY=1 skips it). "steady": in that same process, the best CPU seconds of solves
 *    4 to 14 (4 to 8 until 2026-12-04: those still carried compilation), each with the cache emptied:
 *    the engine once V8 has compiled its hot loops with full type feedback, as in a solver-pool or
 *    bench worker that has run a dozen solves. Cold, warm and
 *    steady differ by V8's tier-up alone (same code, same iterates): at trapezoidal N = 1,600,
 *    0.77–0.92, 0.68–0.70 and 0.23–0.25 s of CPU over three runs (2026-12-03; DEVELOPERS.md);
 *  - peak memory: the reference's maximum resident set (GNU time), and Arcwatch's maximum resident
 *    set minus that of an empty Node process (`node -e 0`) — the issue's measure — and minus that of
 *    the same child process that loads everything without solving ("loaded": what the solve itself
 *    costs). The Arcwatch side runs from an esbuild bundle of bench/side-by-side-child.ts (no
 *    TypeScript loader in the process; ARCWATCH_CHILD_TSX=1 runs it through tsx as before).
 * Ratios are Arcwatch ÷ reference; "steady/iter" compares CPU seconds per iteration (steady ÷ the
 * reference's), the cost of an iteration apart from how many each solver takes. Times on a shared machine are noisy: compare ratios, not seconds;
 * the load average is printed before and after. Last, the least-squares exponent p of Arcwatch's
 * CPU time per iteration (steady) ≈ C·N^p over N ≥ 400 (goal p ≤ 1.05: linear work per iteration).
 *
 * Then, per scheme, the same comparison at equal accuracy (skip with --no-matched): the reference is
 * run again at tol 1e-9, 1e-10 and 1e-11, and Arcwatch is set against the loosest of its four runs
 * whose h(t_f) is as close to the reference's own tol-1e-11 answer as Arcwatch's is (see
 * matchedAccuracy below). At tol 1e-8 the two solvers stop at different accuracies, so the first
 * table's iteration ratio compares unequal answers; this one does not.
 */
import { spawnSync } from "node:child_process";
import { existsSync, rmSync, statSync } from "node:fs";
import { cpus, loadavg, tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

const HERE = path.dirname(fileURLToPath(import.meta.url));
const SOURCE = path.resolve(HERE, "../../../shared/peers/goddard_ipopt.cpp");
const SOURCE_ALT = "/work/shared/peers/goddard_ipopt.cpp";
const BINARY = path.join(tmpdir(), "arcwatch-goddard-ipopt");
const INSTALL = "apt-get install -y coinor-libipopt-dev libopenblas-dev liblapack-dev g++ pkg-config";

interface Run {
  iterations: number;
  status: string;
  seconds: number;
  /** Process CPU seconds (user + system) of the same solve: the figure least inflated by load. */
  cpuSeconds: number;
  /** Arcwatch only: CPU seconds of a warm solve of the same N (see the header), or null. */
  warmCpuSeconds?: number | null;
  /** Arcwatch only: the best CPU seconds of solves 4–14 of the same N in one process (see the header), or null. */
  steadyCpuSeconds?: number | null;
  objective: number | null;
  rssKb: number | null;
}

// ---------------------------------------------------------------------------------------------
const argv = process.argv.slice(2);
const opt = (name: string, dflt: string) => {
  const i = argv.indexOf(name);
  return i >= 0 ? argv[i + 1] : dflt;
};
const maxN = Number(opt("--max", "3200"));
const minN = Number(opt("--min", "100"));
const reps = Math.max(1, Number(opt("--reps", "1")));
const schemes = opt("--schemes", "trapezoidal,hermite-simpson").split(",") as ("trapezoidal" | "hermite-simpson")[];
const matchedOn = !argv.includes("--no-matched");
const Ns = [100, 200, 400, 800, 1600, 3200].filter((n) => n >= minN && n <= maxN);
const GNU_TIME = existsSync("/usr/bin/time") ? "/usr/bin/time" : null;

/** Runs a command, under GNU time when present; returns stdout and the peak resident set (kB). */
function measured(cmd: string, args: string[], env?: NodeJS.ProcessEnv): { stdout: string; rssKb: number | null; ok: boolean; stderr: string } {
  const full = GNU_TIME ? [GNU_TIME, ["-f", "ARCWATCH_MAXRSS=%M", cmd, ...args]] as const : [cmd, args] as const;
  const r = spawnSync(full[0], full[1] as string[], { encoding: "utf8", env: { ...process.env, ...env }, maxBuffer: 1 << 26 });
  const m = /ARCWATCH_MAXRSS=(\d+)/.exec(r.stderr ?? "");
  return { stdout: r.stdout ?? "", stderr: r.stderr ?? "", rssKb: m ? Number(m[1]) : null, ok: r.status === 0 };
}

function referenceBinary(): string | null {
  const src = existsSync(SOURCE) ? SOURCE : existsSync(SOURCE_ALT) ? SOURCE_ALT : null;
  if (!src) {
    console.log(`reference source not found at ${SOURCE}: measuring Arcwatch alone`);
    return null;
  }
  const pc = spawnSync("pkg-config", ["--cflags", "--libs", "ipopt"], { encoding: "utf8" });
  if (pc.status !== 0) {
    console.log(`Debian's IPOPT library is not installed (pkg-config finds no "ipopt"). To compare, install it with\n  ${INSTALL}\nand run this script again. Measuring Arcwatch alone.`);
    return null;
  }
  if (!existsSync(BINARY) || statSync(BINARY).mtimeMs < statSync(src).mtimeMs) {
    console.log(`building the reference: g++ -O2 -std=c++11 -o ${BINARY} ${src} ${pc.stdout.trim()}`);
    const flags = pc.stdout.trim().split(/\s+/);
    let b = spawnSync("g++", ["-O2", "-std=c++11", "-o", BINARY, src, ...flags], { encoding: "utf8" });
    if (b.status !== 0 && /cannot find -l(lapack|blas)/.test(b.stderr)) {
      // Without liblapack-dev / libblas-dev only the runtime libraries (liblapack.so.3, libblas.so.3) exist.
      const runtime = flags.map((f) => (f === "-llapack" ? "-l:liblapack.so.3" : f === "-lblas" ? "-l:libblas.so.3" : f));
      console.log("linking against the runtime libraries liblapack.so.3 and libblas.so.3 (no -dev packages)");
      b = spawnSync("g++", ["-O2", "-std=c++11", "-o", BINARY, src, ...runtime], { encoding: "utf8" });
    }
    if (b.status !== 0) {
      console.log(`building the reference failed:\n${b.stderr}\nMeasuring Arcwatch alone.`);
      return null;
    }
  }
  return BINARY;
}

function runReference(bin: string, N: number, scheme: string, tol?: string): Run | null {
  const r = measured(bin, [String(N), scheme === "trapezoidal" ? "trap" : "hs", "1", ...(tol ? [`tol=${tol}`] : [])], { OPENBLAS_NUM_THREADS: "1" });
  const line = r.stdout.split("\n").find((l) => /^(trap|hs),/.test(l));
  if (!r.ok || !line) return null;
  // method,N,nvar,ncon,iters,status,solve_s,s_per_iter,hT,tf,ipopt_wall_s,cpu_s
  const f = line.split(",");
  return { iterations: Number(f[4]), status: f[5] === "0" ? "optimal" : f[5] === "1" ? "acceptable" : `status ${f[5]}`, seconds: Number(f[6]), cpuSeconds: Number(f[11]), objective: Number(f[8]), rssKb: r.rssKb };
}

/**
 * The Arcwatch side (bench/side-by-side-child.ts) as one esbuild bundle in the system temp folder:
 * the child process then holds the engine's code and nothing of a TypeScript loader, so that its
 * memory and start figures are the engine's. Every package is bundled (only the parts the engine
 * uses are loaded). ARCWATCH_CHILD_TSX=1 runs the TypeScript sources through tsx instead.
 */
const CHILD_SOURCE = path.join(HERE, "side-by-side-child.ts");
const FIXTURE = path.join(HERE, "../tests/schemes/fixtures/cops-goddard.json");
async function childCommand(): Promise<string[]> {
  if (process.env.ARCWATCH_CHILD_TSX) return ["--import", "tsx", CHILD_SOURCE];
  const { build } = await import("esbuild");
  const outfile = path.join(tmpdir(), `arcwatch-side-by-side-child-${process.pid}.mjs`);
  const t0 = performance.now();
  await build({
    entryPoints: [CHILD_SOURCE],
    outfile,
    bundle: true,
    format: "esm",
    platform: "node",
    target: "node20",
    logLevel: "warning",
    legalComments: "none",
    // bundled CommonJS (inside mathjs) may call require()
    banner: { js: 'import { createRequire as __arcwatchRequire } from "node:module"; const require = __arcwatchRequire(import.meta.url);' },
  });
  console.log(`Arcwatch side bundled with esbuild into ${outfile} (${((performance.now() - t0) / 1000).toFixed(1)} s)`);
  process.on("exit", () => rmSync(outfile, { force: true }));
  return [outfile];
}
const child = await childCommand();
function runArcwatch(N: number, scheme: string, warm = false): Run | null {
  const r = measured(process.execPath, [...child, String(N), scheme, ...(warm ? ["warm"] : []), "--fixture", FIXTURE]);
  const line = r.stdout.trim().split("\n").pop();
  if (!r.ok || !line) {
    console.log(`Arcwatch child failed (N = ${N}, ${scheme}): ${r.stderr.slice(-400)}`);
    return null;
  }
  return { ...(JSON.parse(line) as Omit<Run, "rssKb">), rssKb: r.rssKb };
}

const best = (runs: (Run | null)[]): Run | null => {
  const ok = runs.filter((r): r is Run => r !== null);
  if (ok.length === 0) return null;
  const b = ok.reduce((a, r) => (r.cpuSeconds < a.cpuSeconds ? r : a));
  return { ...b, rssKb: Math.min(...ok.map((r) => r.rssKb ?? Infinity)) };
};
const mb = (kb: number | null) => (kb === null || !Number.isFinite(kb) ? "—" : (kb / 1024).toFixed(0));
const ratio = (a: number | null | undefined, b: number | null | undefined) => (a != null && b != null && b > 0 && Number.isFinite(a / b) ? (a / b).toFixed(2) : "—");

const bin = referenceBinary();
const empty = measured(process.execPath, ["-e", "0"]).rssKb;
const loaded = runArcwatch(0, "trapezoidal")?.rssKb ?? null;
const load = () => loadavg().map((v) => v.toFixed(1)).join(" ");
if (process.env.ARCWATCH_GAP_TOL) console.log(`Arcwatch with gapTol = ${process.env.ARCWATCH_GAP_TOL} (ARCWATCH_GAP_TOL)`);
console.log(`machine: ${cpus()[0]?.model ?? "?"} × ${cpus().length}, ${process.platform} ${process.arch}, Node ${process.version}; load average (1, 5, 15 min) ${load()}`);
console.log(`peak memory of an empty Node process ${mb(empty)} MB; of one that loads the engine without solving ${mb(loaded)} MB`);
const perIteration = (s: number | null | undefined, iterations: number | undefined) => (s != null && iterations ? s / iterations : null);
const cpuS = (r: Run | null) => (r ? r.cpuSeconds.toFixed(3).padStart(6) : "     —");
const wallS = (r: Run | null) => (r ? r.seconds.toFixed(3).padStart(6) : "     —");
const warmS = (r: Run | null) => (r?.warmCpuSeconds != null ? r.warmCpuSeconds.toFixed(3).padStart(6) : "     —");
const steadyS = (r: Run | null) => (r?.steadyCpuSeconds != null ? r.steadyCpuSeconds.toFixed(3).padStart(6) : "     —");

/**
 * Equal accuracy. At tol 1e-8 the reference stops with an objective error that grows with N (its
 * complementarity test leaves n_z μ of barrier offset: 1.1e-5 in h(t_f) at trapezoidal N = 3,200,
 * measured 2026-12-03), while Arcwatch's duality-gap test (app/engine/nlp/gap.ts) keeps going until
 * that offset is gone; iteration counts at the same tol then compare unequal answers. Here the
 * reference is run again with tighter tolerances, and Arcwatch is compared with the loosest one whose
 * objective is as accurate as Arcwatch's. h* is the reference's own answer at the tightest tol (so
 * the yardstick is not Arcwatch's); errors within MATCH_FLOOR of it count as equal (the tolerance
 * both solvers are given, and the resolution of the reference's 8-decimal printout of h; common
 * practice, no source).
 */
const TOLS = ["1e-8", "1e-9", "1e-10", "1e-11"] as const;
const MATCH_FLOOR = 1e-8;
function matchedAccuracy(binary: string, N: number, scheme: string, ref8: Run, our: Run): string {
  const runs: (Run | null)[] = [ref8];
  for (const tol of TOLS.slice(1)) {
    const rs: (Run | null)[] = [];
    for (let k = 0; k < reps; k++) rs.push(runReference(binary, N, scheme, tol));
    runs.push(best(rs));
  }
  const hStar = runs[runs.length - 1]?.objective ?? null;
  const diff = (r: Run | null | undefined) => (hStar !== null && r?.objective != null ? r.objective - hStar : null);
  const err = (r: Run | null | undefined) => { const d = diff(r); return d === null ? null : Math.abs(d); };
  // Signed h − h*: h(t_f) is maximised, so a positive difference is a better objective than h*.
  const e = (x: number | null) => (x === null ? "—" : `${x >= 0 ? "+" : ""}${x.toExponential(1)}`).padEnd(8);
  const ourErr = err(our);
  const k = ourErr === null ? -1 : runs.findIndex((r) => { const x = err(r); return x !== null && x <= Math.max(ourErr, MATCH_FLOOR); });
  const m = k >= 0 ? runs[k]! : null;
  const cells = runs.map((r) => `${String(r ? `${r.iterations}${r.status === "optimal" ? "" : "*"}` : "—").padStart(12)}  ${e(diff(r))}`);
  return (
    `${String(N).padStart(6)}  | ${hStar?.toFixed(9) ?? "—"} | ${cells.join("| ")}| ${(k >= 0 ? TOLS[k] : "—").padStart(7)}  ${String(m?.iterations ?? "—").padStart(9)} ${cpuS(m)} | ` +
    `${String(our.iterations).padStart(14)}  ${e(diff(our))} ${cpuS(our)} ${warmS(our)} ${steadyS(our)} | ` +
    `${ratio(our.iterations, m?.iterations).padStart(10)}  ${ratio(our.cpuSeconds, m?.cpuSeconds).padStart(9)}  ${ratio(our.warmCpuSeconds, m?.cpuSeconds).padStart(10)}  ${ratio(our.steadyCpuSeconds, m?.cpuSeconds).padStart(12)}`
  );
}

for (const scheme of schemes) {
  console.log(`\n${scheme}, COPS Goddard, COPS start, tol 1e-8 (best CPU of ${reps}; reference and Arcwatch alternate; steady = Arcwatch's best of solves 4–${process.env.ARCWATCH_STEADY_SOLVES ?? 14} in one process)`);
  console.log("     N  | ref iters  status     cpu s  wall s   MB | Arcwatch iters  status     cpu s  warm s steady s  wall s MB>empty MB>loaded | iter ratio  cpu ratio  warm ratio  steady ratio  steady/iter ratio  wall ratio  mem ratio (>empty, >loaded) | h(tf) ref / ours");
  const perIter: [number, number][] = [];
  const matchedRows: string[] = [];
  for (const N of Ns) {
    const refRuns: (Run | null)[] = [];
    const ourRuns: (Run | null)[] = [];
    for (let k = 0; k < reps; k++) {
      if (bin) refRuns.push(runReference(bin, N, scheme));
      const cold = runArcwatch(N, scheme);
      const warm = process.env.ARCWATCH_COLD_ONLY ? null : runArcwatch(N, scheme, true);
      ourRuns.push(cold && warm ? { ...cold, warmCpuSeconds: warm.warmCpuSeconds, steadyCpuSeconds: warm.steadyCpuSeconds ?? null } : cold);
    }
    const ref = bin ? best(refRuns) : null;
    const our = best(ourRuns);
    if (our && our.iterations > 0 && N >= 400) perIter.push([Math.log(N), Math.log((our.steadyCpuSeconds ?? our.warmCpuSeconds ?? our.cpuSeconds) / our.iterations)]);
    const ourMem = our?.rssKb != null && empty != null ? our.rssKb - empty : null;
    const ourSolveMem = our?.rssKb != null && loaded != null ? our.rssKb - loaded : null;
    console.log(
      `${String(N).padStart(6)}  | ${String(ref?.iterations ?? "—").padStart(9)}  ${(ref?.status ?? "—").padEnd(10)} ${cpuS(ref)}  ${wallS(ref)} ${mb(ref?.rssKb ?? null).padStart(4)} | ` +
        `${String(our?.iterations ?? "—").padStart(14)}  ${(our?.status ?? "—").padEnd(10)} ${cpuS(our)}  ${warmS(our)}   ${steadyS(our)}  ${wallS(our)} ${mb(ourMem).padStart(8)} ${mb(ourSolveMem).padStart(8)} | ` +
        `${ratio(our?.iterations, ref?.iterations).padStart(10)}  ${ratio(our?.cpuSeconds, ref?.cpuSeconds).padStart(9)}  ${ratio(our?.warmCpuSeconds, ref?.cpuSeconds).padStart(10)}  ${ratio(our?.steadyCpuSeconds, ref?.cpuSeconds).padStart(12)}  ${ratio(perIteration(our?.steadyCpuSeconds, our?.iterations), perIteration(ref?.cpuSeconds, ref?.iterations)).padStart(17)}  ${ratio(our?.seconds, ref?.seconds).padStart(10)}  ${ratio(ourMem, ref?.rssKb).padStart(9)}, ${ratio(ourSolveMem, ref?.rssKb).padStart(5)} | ${ref?.objective?.toFixed(8) ?? "—"} / ${our?.objective?.toFixed(8) ?? "—"}`,
    );
    if (bin && matchedOn && ref && our) matchedRows.push(matchedAccuracy(bin, N, scheme, ref, our));
  }
  if (matchedRows.length > 0) {
    console.log(`\n${scheme} at equal accuracy: the reference again at tol ${TOLS.slice(1).join(", ")} (best CPU of ${reps}); h* = its tol ${TOLS[TOLS.length - 1]} objective (printed to 8 decimals by the reference, so differences below 1e-8 are not resolved); "h − h*" signed (maximised: + is better than h*); * = "acceptable"; "matched" = the loosest tol with |h − h*| ≤ max(Arcwatch's |h − h*|, ${MATCH_FLOOR})`);
    console.log(`     N  |          h*  | ${TOLS.map((t) => `ref ${t}: iters  h − h*  `).join("| ")}| matched  ref iters  cpu s | Arcwatch iters  h − h*   cpu s  warm s steady s | iter ratio  cpu ratio  warm ratio  steady ratio`);
    for (const row of matchedRows) console.log(row);
  }
  if (perIter.length >= 2) {
    const mx = perIter.reduce((a, p) => a + p[0], 0) / perIter.length, my = perIter.reduce((a, p) => a + p[1], 0) / perIter.length;
    const slope = perIter.reduce((a, p) => a + (p[0] - mx) * (p[1] - my), 0) / perIter.reduce((a, p) => a + (p[0] - mx) ** 2, 0);
    console.log(`Arcwatch CPU time per iteration (steady where measured) ≈ C·N^${slope.toFixed(2)} (least squares over N ≥ 400; goal ≤ 1.05)`);
  }
}
console.log(`\nload average at the end ${load()}`);
