/**
 * Detection power and false alarms of the regression rules, per planted size and per method.
 *
 *   node --import tsx bench/detection-power.bench.ts [--noise <db>] [--measure <K>] [--suite quick]
 *        [--trials 264] [--unchanged 528] [--replicates 400] [--no-ab] [--no-real] [--seed 1]
 *        [--only-speed] [--no-suite-rows] [--max-blocks <n>] [--screen-ratio <r>]
 *
 * 1. Measured noise: K complete runs of the suite on one unchanged commit. `--noise <db>` reads
 *    runs already recorded there (the commit with the most runs); otherwise `--measure K` (default
 *    6) runs the bench command line K times on this checkout into a temporary database first.
 * 2. Calibration (issue 13, item 7): spread of ln(median ratio) between every pair of those runs,
 *    raw and divided by the calibration kernel's ratio (case-level and run-level).
 * 3. Trials on the RECORDED runs with SIMULATED plants (./power/simulate.ts): every ordered pair
 *    of recorded runs is a baseline and a current run (then bootstrap-resampled pairs), slowdowns of 5/10/20/50 % planted in one scheme (a random one per trial) or in
 *    every case, accuracy losses (errors ×1.5, ×3, ×10 in one scheme), and unchanged runs; judged
 *    by the product's rules (per-case, pooled) and by the A/B verdict. Printed: detection rate and
 *    false-alarm rate per suite run.
 * 4. REAL check (./power/real-check.ts): a temporary git repository with a copy of the project;
 *    unchanged reruns and commits that plant 20 % and 50 % extra work in the Hermite–Simpson scheme
 *    as a code change; what the command line reported for each run.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { spawnSync } from "node:child_process";
import { parseArgs } from "node:util";
import { loadSuite, suitePath } from "../app/runs/suite";
import { AB_CONFIRM_BLOCKS } from "../app/runs/ab-result";
import { calibrationEffect, fitNoise, readNoiseRuns } from "./power/noise";
import { realCheck, REPO } from "./power/real-check";
import { driftTrial, runTrial, type Placement, type Plant, type TrialOutcome } from "./power/simulate";

const { values: args } = parseArgs({
  options: {
    noise: { type: "string" },
    measure: { type: "string", default: "6" },
    suite: { type: "string", default: "quick" },
    trials: { type: "string", default: "264" },
    unchanged: { type: "string", default: "528" },
    "no-ab": { type: "boolean", default: false },
    "no-real": { type: "boolean", default: false },
    "only-speed": { type: "boolean", default: false },
    // Skip the whole-suite plants (a one-scheme plant is the harder case; saves a third of the time).
    "no-suite-rows": { type: "boolean", default: false },
    seed: { type: "string", default: "1" },
    replicates: { type: "string", default: "400" },
    // Other confirmation settings to simulate (defaults: the suite's confirmMaxBlocks and screenSpeedRatio).
    "max-blocks": { type: "string" },
    "screen-ratio": { type: "string" },
  },
});

const pct = (k: number, n: number) => (n === 0 ? "—" : `${((100 * k) / n).toFixed(1)} %`);
const load = () => os.loadavg()[0]!.toFixed(1);
const cpu0 = process.cpuUsage();

// 1. Measured noise.
let dbFile = args.noise;
if (!dbFile) {
  const K = Number(args.measure);
  dbFile = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-noise-")), "noise.db");
  for (let k = 1; k <= K; k++) {
    process.stderr.write(`measuring noise: run ${k} of ${K} of suite ${args.suite} (load ${load()})\n`);
    const r = spawnSync(process.execPath, ["--import", "tsx", path.join(REPO, "bench/run.ts"), "--suite", args.suite, "--db", dbFile, "--no-alerts", "--json"], { cwd: REPO, encoding: "utf8" });
    if (r.status !== 0 && r.status !== 3) throw new Error(`noise run ${k} failed (exit ${r.status}):\n${r.stderr}`);
  }
}
const runs = readNoiseRuns(dbFile, args.suite);
const model = fitNoise(runs);
const suite = loadSuite(suitePath(args.suite, REPO));
// Fewer bootstrap replicates than the product's 2000 keep thousands of trials affordable on 2
// shared cores; a percentile from 400 replicates is as unbiased, only a little noisier.
const t = {
  ...suite.thresholds,
  bootstrapReplicates: Number(args.replicates),
  ...(args["max-blocks"] ? { confirmMaxBlocks: Number(args["max-blocks"]) } : {}),
  ...(args["screen-ratio"] ? { screenSpeedRatio: Number(args["screen-ratio"]) } : {}),
};
const repeats = suite.definition.repeats;
console.log(`Detection power, ${new Date().toISOString().slice(0, 16)} UTC, ${os.cpus().length} cores, load average ${os.loadavg().map((v) => v.toFixed(1)).join(" / ")}`);
console.log(`Suite ${args.suite}: ${model.keys.length} timed cases, ${repeats} samples each, clock ${suite.definition.clock}; thresholds speedRatio ${t.speedRatio}, alpha ${t.alpha}, pooledSpeedRatio ${t.pooledSpeedRatio}, confidence ${t.confidence}`);
console.log(`Measured noise from ${runs.length} runs of commit ${runs[0]!.commit.slice(0, 10)} (${dbFile}): sd of ln time — run shift ${model.sd.run.toFixed(3)}, case median shift ${model.sd.case.toFixed(3)} (includes the sampling noise of a median), within a run ${model.sd.within.toFixed(3)}`);

// 2. Calibration.
const cal = calibrationEffect(runs);
const f3 = (v: number | null) => (v === null ? "not recorded" : v.toFixed(3));
console.log(`\nCalibration (${cal.pairs} case comparisons between unchanged runs; RMS of ln median ratio, smaller = less noise):`);
console.log(`  raw ${f3(cal.raw)} · divided by the case-level calibration ratio ${f3(cal.caseCalibrated)} · by the run-level ratio ${f3(cal.runCalibrated)} · the case-level calibration ratio itself ${f3(cal.calibrationSpread)}`);

// 3. Simulated trials.
const schemes = [...new Set(model.keys.map((k) => model.cases.get(k)!.scheme))];
const trials = Number(args.trials);
const unchanged = Number(args.unchanged);
const seed0 = Number(args.seed);
// The automatic confirmation's blocks: rounds of 6 while a verdict is unclear, up to the suite's confirmMaxBlocks.
const opts = { thresholds: t, repeats, ab: !args["no-ab"], abBlocks: AB_CONFIRM_BLOCKS.blocks, abMaxBlocks: t.confirmMaxBlocks, abRepeats: 3, abReplicates: Number(args.replicates), screen: true };
interface Row { label: string; n: number; out: TrialOutcome[] }
const rows: Row[] = [];
const pairs: [number, number][] = [];
for (let a = 0; a < runs.length; a++) for (let b = 0; b < runs.length; b++) if (a !== b) pairs.push([a, b]);
const run = (label: string, n: number, plantOf: (i: number) => Plant) => {
  const out: TrialOutcome[] = [];
  for (let i = 0; i < n; i++) out.push(runTrial(model, runs, pairs[i % pairs.length]!, plantOf(i), seed0 * 1_000_003 + rows.length * 100_003 + i, opts, i >= pairs.length));
  rows.push({ label, n, out });
  process.stderr.write(`simulated ${label} (${n} trials, load ${load()})\n`);
};
const oneScheme = (i: number): Placement => ({ kind: "scheme", scheme: schemes[i % schemes.length]! });
for (const size of args["only-speed"] ? [0.1, 0.2] : [0.05, 0.1, 0.2, 0.5]) {
  run(`+${Math.round(size * 100)} %, one scheme`, trials, (i) => ({ placement: oneScheme(i), slowdown: size, accuracyFactor: 1 }));
  if (!args["no-suite-rows"]) run(`+${Math.round(size * 100)} %, whole suite`, trials, () => ({ placement: { kind: "suite" }, slowdown: size, accuracyFactor: 1 }));
}
if (!args["only-speed"]) for (const factor of [1.5, 3, 10]) run(`errors ×${factor}, one scheme`, Math.min(trials, 50), (i) => ({ placement: oneScheme(i), slowdown: 0, accuracyFactor: factor }));
run("unchanged", unchanged, () => ({ placement: { kind: "none" }, slowdown: 0, accuracyFactor: 1 }));

const count = (out: TrialOutcome[], f: (o: TrialOutcome) => boolean) => out.filter(f).length;
console.log(`\nRecorded run pairs with SIMULATED plants (${trials} trials per planted row, ${unchanged} unchanged; the first ${pairs.length} are the ${pairs.length} ordered pairs of recorded runs as they are, the rest bootstrap-resampled pairs; detection = a finding on the planted cases or group; one scheme = each of ${schemes.length} schemes in turn):`);
// `bench --confirm`: a speed finding raises only when the A/B then confirms it. The A/B sitting is
// simulated independently of the run that flagged (it is a later sitting), on the planted scheme's
// cases (unchanged: a random scheme's), so "gated" = flagged AND A/B slower.
const gated = (o: TrialOutcome) => (o.perCase.detected || o.pooled.detected) && !!o.ab?.detected;
const gatedAlarm = (o: TrialOutcome) => (o.perCase.alarm || o.pooled.alarm) && !!o.ab?.alarm;
console.log(`| planted | per-case | pooled | A/B (${opts.abBlocks} blocks, up to ${opts.abMaxBlocks} while unclear) | any finding | flagged, then A/B (--confirm) | other alarms in the same run |`);
console.log("|---|---|---|---|---|---|---|");
for (const r of rows) {
  if (r.label === "unchanged") continue;
  const acc = r.label.startsWith("errors");
  const det = (o: TrialOutcome) => (acc ? o.accuracy.detected : o.perCase.detected);
  const other = count(r.out, (o) => o.perCase.alarm || o.pooled.alarm || o.accuracy.alarm);
  console.log(
    `| ${r.label} | ${pct(count(r.out, det), r.n)} | ${acc ? "—" : pct(count(r.out, (o) => o.pooled.detected), r.n)} | ${acc || !r.out[0]!.ab ? "—" : pct(count(r.out, (o) => !!o.ab?.detected), r.n)} | ${pct(count(r.out, (o) => o.any.detected), r.n)} | ${acc ? pct(count(r.out, det), r.n) : !r.out[0]!.ab ? "—" : pct(count(r.out, gated), r.n)} | ${pct(other, r.n)} |`,
  );
}
const u = rows.find((r) => r.label === "unchanged")!;
console.log(
  `| unchanged: false alarms per suite run | ${pct(count(u.out, (o) => o.perCase.alarm), u.n)} | ${pct(count(u.out, (o) => o.pooled.alarm), u.n)} | ${u.out[0]!.ab ? pct(count(u.out, (o) => !!o.ab?.alarm), u.n) : "—"} | ${pct(count(u.out, (o) => o.any.alarm), u.n)} | ${u.out[0]!.ab ? pct(count(u.out, (o) => gatedAlarm(o) || o.accuracy.alarm), u.n) : "—"} | |`,
);
if (u.out[0]!.ab) {
  const g10 = count(oneTenRow(), gated) / oneTenRow().length, g20 = count(rows.find((r) => r.label === "+20 %, one scheme")!.out, gated) / trials;
  const gu = count(u.out, (o) => gatedAlarm(o) || o.accuracy.alarm) / u.n;
  console.log(`With --confirm (flagged, then A/B): +10 % one scheme ${(100 * g10).toFixed(1)} %, +20 % ${(100 * g20).toFixed(1)} %, unchanged ${(100 * gu).toFixed(1)} % → ${g10 >= 0.95 && g20 === 1 && gu <= 0.01 ? "met" : "NOT met"}`);
}
if (u.out[0]!.screen) {
  const rate = (out: TrialOutcome[], f: (o: TrialOutcome) => boolean) => (out.length ? `${((100 * out.filter(f).length) / out.length).toFixed(1)} %` : "—");
  const meanOf = (out: TrialOutcome[], f: (o: TrialOutcome) => number) => out.reduce((a, o) => a + f(o), 0) / Math.max(1, out.length);
  // Cost in solves: the quick suite's cases take 20–50 ms of CPU each (measured, DEVELOPERS.md), ~40 ms with the harness.
  const screenWord = t.screenSpeedRatio > 0 ? `every scheme whose cases moved by more than ×${t.screenSpeedRatio}, or with a finding` : "every scheme";
  console.log(`\nScreening (screenSpeedRatio ${t.screenSpeedRatio}), then A/B against the pooled floor ×${t.pooledSpeedRatio} (${screenWord}; ${opts.abBlocks} blocks, up to ${opts.abMaxBlocks} while unclear; the checked schemes in one sitting, a decided scheme's cases stopping):`);
  console.log("| planted | detected | other schemes raised | A/B checks per run | A/B solves per run (≈ s at 40 ms) |");
  console.log("|---|---|---|---|---|");
  for (const r of rows) if (r.out[0]?.screen) {
    const solves = meanOf(r.out, (o) => o.screen?.solves ?? 0);
    console.log(`| ${r.label} | ${r.label === "unchanged" ? "—" : rate(r.out, (o) => !!o.screen?.detected)} | ${rate(r.out, (o) => !!o.screen?.alarm)} | ${meanOf(r.out, (o) => o.screen?.checks ?? 0).toFixed(2)} | ${solves.toFixed(0)} (${(0.04 * solves).toFixed(0)} s) |`);
  }
}
function oneTenRow() {
  return rows.find((r) => r.label === "+10 %, one scheme")!.out;
}
const oneTen = rows.find((r) => r.label === "+10 %, one scheme")!;
const oneTwenty = rows.find((r) => r.label === "+20 %, one scheme")!;
// The goal is read on the path a gating runner takes, `bench --confirm` (screening or a finding, then
// the A/B); without the A/B simulation, on the rules alone.
const screened = !!u.out[0]!.screen;
const hit = (r: Row) => count(r.out, (o) => (screened ? !!o.screen?.detected : o.any.detected)) / r.n;
const falseRate = count(u.out, (o) => (screened ? !!o.screen?.alarm || o.accuracy.alarm : o.any.alarm)) / u.n;
console.log(
  `Goal (one scheme +10 % ≥ 95 %, +20 % 100 %, unchanged ≤ 1 %) on ${screened ? "the --confirm path (screened or flagged, then A/B)" : "the rules alone"}: +10 % ${(100 * hit(oneTen)).toFixed(1)} %, +20 % ${(100 * hit(oneTwenty)).toFixed(1)} %, unchanged ${(100 * falseRate).toFixed(1)} % → ${hit(oneTen) >= 0.95 && hit(oneTwenty) === 1 && falseRate <= 0.01 ? "met" : "NOT met"}`,
);

// 3b. The drift rule on simulated histories of 12 runs (a step 3 runs before the current one).
{
  const n = Math.min(unchanged, 300);
  console.log(`\nDrift rule on the recorded runs in random orders (${n} histories of ${runs.length} runs per row, plants SIMULATED; per suite run: any case flagged):`);
  console.log("| driftMinShift | unchanged: false alarms | +20 % one scheme, 3 runs ago | +50 % one scheme, 3 runs ago |");
  console.log("|---|---|---|---|");
  for (const shift of [...new Set([t.driftMinShift, Math.log(1.1), Math.log(1.25), Math.log(1.5)])]) {
    const td = { ...t, driftMinShift: shift };
    const rate = (plant: Plant) => {
      let det = 0, fa = 0;
      for (let i = 0; i < n; i++) {
        const r = driftTrial(model, runs, plant, seed0 * 7_000_001 + i, td, 3);
        if (r.detected) det++;
        if (r.alarm) fa++;
      }
      return { det, fa };
    };
    const u0 = rate({ placement: { kind: "none" }, slowdown: 0, accuracyFactor: 1 });
    const d20 = rate({ placement: oneScheme(0), slowdown: 0.2, accuracyFactor: 1 });
    const d50 = rate({ placement: oneScheme(1), slowdown: 0.5, accuracyFactor: 1 });
    console.log(`| ln ${Math.exp(shift).toFixed(2)}${shift === t.driftMinShift ? " (suite)" : ""} | ${pct(u0.fa, n)} | ${pct(d20.det, n)} | ${pct(d50.det, n)} |`);
  }
}

// 4. Real check.
if (!args["no-real"]) {
  console.log(`\nREAL runs in a temporary git repository (copy of this checkout; plant = Hermite–Simpson re-solves a share of its iterations, app/engine/solve.ts of the copy):`);
  const real = await realCheck({
    scheme: "hermite-simpson",
    problems: ["pika-rover-dash", "kestrel-2-ascent", "tern-orbit-raise"],
    schemes: ["trapezoidal", "hermite-simpson", "lgr"],
    intervals: 20,
    repeats,
    reruns: 3,
    fractions: [0.2, 0.5],
    onRun: (r) => process.stderr.write(`real: ${r.label} (${r.seconds.toFixed(0)} s, load ${load()})\n`),
  });
  console.log("| run | findings (regressions) | group findings | ratio of the scheme group |");
  console.log("|---|---|---|---|");
  for (const r of real.runs) {
    const reg = r.findings.filter((f) => f.direction === "regression");
    const groups = reg.filter((f) => f.scope && f.scope !== "case");
    const hs = r.findings.find((f) => f.caseKey === "scheme:hermite-simpson");
    console.log(`| ${r.label} | ${reg.length}${reg.length ? `: ${reg.map((f) => f.caseKey).join(", ")}` : ""} | ${groups.length} | ${hs ? `×${hs.ratio?.toFixed(2)} [${hs.ciLow?.toFixed(2)}, ${hs.ciHigh?.toFixed(2)}]` : "—"} |`);
  }
}
const cpu = process.cpuUsage(cpu0);
console.log(`\nThis process: ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s CPU (noise runs and real runs are child processes, not counted).`);
