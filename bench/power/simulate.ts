/**
 * Trials from RECORDED runs (./noise.ts) judged by the product's own rules: the per-case rule
 * (app/runs/rules.ts compareCases), pooled evidence (app/runs/pooled.ts), the interleaved A/B
 * verdict (the statistics of bench/runner/ab.ts) and the drift rule.
 *
 * A trial takes two recorded runs of the same unchanged commit as baseline and current run (every
 * ordered pair once; beyond that, both runs' samples bootstrap-resampled), so the noise between
 * them is the machine's real noise between two runs. A planted slowdown multiplies the current
 * samples of the affected cases by (1 + size); a planted accuracy loss multiplies their errors
 * (which do not vary between reruns of one commit: the solver is deterministic). An A/B sitting is
 * `blocks` blocks whose A and B trials draw from one recorded run's samples (same moment, same
 * load), B's times multiplied by the plant. What is simulated is only the plant and the pairing.
 */
import { pooledShift } from "../../app/engine/stats/hierarchical-bootstrap";
import { createPrng, type Prng } from "../../app/engine/stats/prng";
import { pooledFindings } from "../../app/runs/pooled";
import { compareCases, driftFinding, type CaseSnapshot, type Finding } from "../../app/runs/rules";
import type { Thresholds } from "../../app/runs/types";
import { abConfidenceFor, abReplicatesFor, abVerdictOf } from "../../app/runs/ab-result";
import type { NoiseModel, NoiseRun } from "./noise";

export type Placement = { kind: "scheme"; scheme: string } | { kind: "suite" } | { kind: "none" };

export interface Plant {
  placement: Placement;
  /** Relative slowdown (0.1 = 10 %); 0 for none. */
  slowdown: number;
  /** Factor on the affected cases' errors (1 = none). */
  accuracyFactor: number;
}

export interface TrialOutcome {
  perCase: { detected: boolean; alarm: boolean; findings: number };
  pooled: { detected: boolean; alarm: boolean; findings: number };
  /** Anything the product raises from one run (per-case or pooled, speed or accuracy). */
  any: { detected: boolean; alarm: boolean };
  ab: { detected: boolean; alarm: boolean } | null;
  /**
   * Screening (`--confirm`): every scheme whose cases moved by more than the pooled floor as a
   * point estimate (or that has a finding) is put to an A/B judged against that floor.
   */
  screen: { detected: boolean; alarm: boolean; checks: number; solves: number } | null;
  accuracy: { detected: boolean; alarm: boolean; findings: number };
}

const pick = <T>(rng: Prng, v: readonly T[]): T => v[rng.nextInt(v.length)]!;

const affects = (p: Placement, scheme: string) => p.kind === "suite" || (p.kind === "scheme" && p.scheme === scheme);

/**
 * One recorded run as the rules read it, with a plant applied: the run's own samples of every
 * case (bootstrap-resampled when `rng` is given, for trials beyond the number of run pairs).
 */
function snapshot(model: NoiseModel, run: NoiseRun, plant: Plant | null, rng: Prng | null): Map<string, CaseSnapshot> {
  const out = new Map<string, CaseSnapshot>();
  let id = 1;
  for (const key of model.keys) {
    const c = model.cases.get(key)!;
    const t = run.cases.get(key)!;
    const hit = plant !== null && affects(plant.placement, c.scheme);
    const slow = hit ? 1 + plant!.slowdown : 1;
    const accuracy = hit ? plant!.accuracyFactor : 1;
    const samples = (rng ? t.samples.map(() => pick(rng, t.samples)) : t.samples).map((v) => v * slow);
    const err = (v: number | null) => (v === null ? null : v * accuracy);
    out.set(key, {
      id: id++,
      caseKey: key,
      problemId: c.problemId,
      scheme: c.scheme,
      status: t.status,
      iterations: t.iterations,
      objectiveErrorRel: err(t.objectiveErrorRel),
      finalTimeError: err(t.finalTimeError),
      stateError: err(t.stateError),
      controlError: err(t.controlError),
      medianSeconds: [...samples].sort((a, b) => a - b)[samples.length >> 1]!,
      arcsJson: null,
      samples,
      calibration: null,
    });
  }
  return out;
}

/**
 * One A/B sitting over several groups of cases (bench/runner/ab.ts with `groups`): each block is
 * one sitting in which A's and B's trials draw from the samples of ONE recorded run (picked per
 * block and case), so that they share that moment's load as interleaving makes them do. Rounds of
 * `blocks` blocks run while any group's verdict (its cases pooled as app/runs/ab-result.ts
 * `judgeRegression` pools them, against `floor`) is "unclear", up to `maxBlocks`, on the cases of
 * the groups still unclear; each group is judged on all the blocks its cases ran, as the product
 * judges it.
 */
function simulateAbGroups(model: NoiseModel, runs: NoiseRun[], rng: Prng, groups: string[][], plant: Plant, blocks: number, maxBlocks: number, floor: number, repeats: number, seed: number, replicates: number): { slower: boolean[]; solves: number } {
  const keys = [...new Set(groups.flat())];
  const perCase = new Map(keys.map((k) => [k, [] as { x: number[]; y: number[] }[]]));
  let solves = 0;
  let verdicts: ReturnType<typeof abVerdictOf>[] = [];
  let active = new Set(keys);
  // One false-alarm budget over the sitting's groups, as bench/runner/ab.ts (Bonferroni).
  const confidence = abConfidenceFor(groups.length);
  const reps = Math.max(replicates, abReplicatesFor(confidence) * (replicates / 2000));
  for (let ran = 0; ran + blocks <= Math.max(blocks, maxBlocks); ran += blocks) {
    for (const key of keys) {
      if (!active.has(key)) continue;
      const c = model.cases.get(key)!;
      const slow = affects(plant.placement, c.scheme) ? 1 + plant.slowdown : 1;
      for (let b = 0; b < blocks; b++) {
        const pool = pick(rng, runs).cases.get(key)!.samples;
        const draw = (f: number) => Array.from({ length: 2 * repeats }, () => pick(rng, pool) * f);
        // A B B A (or B A A B): two trials of `repeats` solves per side per block.
        perCase.get(key)!.push({ x: draw(slow), y: draw(1) });
        solves += 4 * repeats;
      }
    }
    const shift = new Map(keys.map((k) => [k, pooledShift(perCase.get(k)!, { confidence, seed: 7, replicates: reps })]));
    verdicts = groups.map((g) => {
      const shifts = g.map((k) => shift.get(k)!);
      if (shifts.length === 1) return abVerdictOf(shifts[0]!.ratio, shifts[0]!.low, shifts[0]!.high, floor);
      const lnMean = shifts.reduce((a, x) => a + Math.log(x.ratio), 0) / shifts.length;
      const pooled = pooledShift(shifts.map((c) => ({ x: c.caseRatios, y: c.caseRatios.map(() => 1) })), { confidence, seed: seed + 11, replicates: reps });
      return abVerdictOf(Math.exp(lnMean), pooled.low, pooled.high, floor);
    });
    if (!verdicts.includes("unclear")) break;
    // Only the cases of groups still unclear run on (bench/runner/ab.ts).
    active = new Set(groups.filter((_, i) => verdicts[i] === "unclear").flat());
  }
  return { slower: verdicts.map((v) => v === "slower"), solves };
}

export interface TrialOptions {
  thresholds: Thresholds;
  repeats: number;
  /** Run the A/B simulation too (costs most of the time). */
  ab: boolean;
  abBlocks: number;
  /** Rounds of `abBlocks` while unclear, up to this many blocks (default: no extension). */
  abMaxBlocks?: number;
  /** Simulate screening too (see TrialOutcome.screen). */
  screen?: boolean;
  abRepeats: number;
  /** Bootstrap replicates of the A/B intervals (bench/runner/ab.ts uses 2000). */
  abReplicates: number;
}

/**
 * One trial: run `pair[0]` is the baseline, run `pair[1]` (planted) the current one; with
 * `resample` both runs' samples are bootstrap-resampled (trials beyond the number of pairs).
 */
export function runTrial(model: NoiseModel, runs: NoiseRun[], pair: [number, number], plant: Plant, seed: number, o: TrialOptions, resample = false): TrialOutcome {
  const rng = createPrng(seed);
  const base = snapshot(model, runs[pair[0]]!, null, resample ? rng : null);
  const now = snapshot(model, runs[pair[1]]!, plant, resample ? rng : null);
  const changed = plant.placement.kind !== "none";
  const affected = (f: Finding) => {
    if (f.scope && f.scope !== "case") {
      if (plant.placement.kind === "suite") return true;
      if (plant.placement.kind === "scheme") return f.scope === "scheme" && f.caseKey === `scheme:${plant.placement.scheme}`;
      return false;
    }
    const scheme = model.cases.get(f.caseKey)?.scheme ?? "";
    return affects(plant.placement, scheme);
  };
  const regress = (f: Finding) => f.direction === "regression";
  const cases = compareCases(now, base, o.thresholds).filter(regress);
  const speedCases = cases.filter((f) => f.kind === "speed");
  const accuracy = cases.filter((f) => f.kind === "accuracy");
  const groups = pooledFindings(now, base, o.thresholds).filter(regress);
  const speedPlanted = changed && plant.slowdown > 0;
  const accPlanted = changed && plant.accuracyFactor !== 1;
  const side = (found: Finding[], planted: boolean) => ({
    detected: planted && found.some(affected),
    // An alarm that is not the planted change (on an unchanged run: any alarm at all).
    alarm: found.some((f) => !planted || !affected(f)),
    findings: found.length,
  });
  const perCase = side(speedCases, speedPlanted);
  const pooled = side(groups, speedPlanted);
  const acc = side(accuracy, accPlanted);
  const all = [...cases, ...groups];
  const any = { detected: (speedPlanted || accPlanted) && all.some(affected), alarm: !changed && all.length > 0 };
  let ab: TrialOutcome["ab"] = null;
  if (o.ab && plant.accuracyFactor === 1) {
    // Confirmation on the cases the plant concerns (unchanged: a random scheme's cases).
    const scheme = plant.placement.kind === "scheme" ? plant.placement.scheme : pick(rng, [...new Set(model.keys.map((k) => model.cases.get(k)!.scheme))]);
    const keys = plant.placement.kind === "suite" ? model.keys : model.keys.filter((k) => model.cases.get(k)!.scheme === scheme);
    // A group of cases: judged against the pooled floor, as the product judges a group regression.
    const slower = simulateAbGroups(model, runs, rng, [keys], plant, o.abBlocks, o.abMaxBlocks ?? o.abBlocks, o.thresholds.pooledSpeedRatio, o.abRepeats, seed, o.abReplicates).slower[0]!;
    ab = { detected: speedPlanted && slower, alarm: !speedPlanted && slower };
  }
  let screen: TrialOutcome["screen"] = null;
  if (o.ab && o.screen && plant.accuracyFactor === 1) {
    const schemes = [...new Set(model.keys.map((k) => model.cases.get(k)!.scheme))];
    const med = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1]!;
    const flaggedSchemes = new Set([...speedCases, ...groups].map((f) => (f.scope === "scheme" ? f.caseKey.slice("scheme:".length) : f.scope === "suite" ? "*" : (model.cases.get(f.caseKey)?.scheme ?? ""))));
    let detected = false;
    let alarm = false;
    const checked: string[] = [];
    const lnOf = (keys: string[]) => keys.reduce((a, k) => a + Math.log(med(now.get(k)!.samples) / med(base.get(k)!.samples)), 0) / keys.length;
    for (const scheme of schemes) {
      const keys = model.keys.filter((k) => model.cases.get(k)!.scheme === scheme);
      const ln = lnOf(keys);
      // Against the baseline, or against the other schemes of the same run (a run that was fast as a whole hides a one-scheme slowdown).
      const rest = lnOf(model.keys.filter((k) => model.cases.get(k)!.scheme !== scheme));
      const r0 = o.thresholds.screenSpeedRatio;
      const floor = r0 > 0 ? Math.log(r0) : -Infinity;
      if (!(ln > floor || ln - rest > floor || flaggedSchemes.has(scheme) || flaggedSchemes.has("*"))) continue;
      checked.push(scheme);
    }
    // Every checked scheme in one sitting, as `bench --confirm` runs them (ab-confirm.server.ts groups).
    const keysOf = (scheme: string) => model.keys.filter((k) => model.cases.get(k)!.scheme === scheme);
    const r = checked.length ? simulateAbGroups(model, runs, rng, checked.map(keysOf), plant, o.abBlocks, o.abMaxBlocks ?? o.abBlocks, o.thresholds.pooledSpeedRatio, o.abRepeats, seed, o.abReplicates) : { slower: [], solves: 0 };
    checked.forEach((scheme, i) => {
      if (!r.slower[i]) return;
      if (speedPlanted && affects(plant.placement, scheme)) detected = true;
      else alarm = true;
    });
    screen = { detected, alarm, checks: checked.length, solves: r.solves };
  }
  return { perCase, pooled, any, ab, screen, accuracy: acc };
}

/**
 * The drift rule (app/runs/rules.ts driftFinding) on histories made of the recorded runs of one
 * unchanged commit in a random order (exchangeable when nothing changed), the last one the
 * current run; a planted step slows the affected cases of the last `stepRuns` runs. Returns
 * whether an affected case was flagged and whether any case outside the plant (every case, for an
 * unchanged history) was flagged as a regression.
 */
export function driftTrial(model: NoiseModel, runs: NoiseRun[], plant: Plant, seed: number, t: Thresholds, stepRuns: number): { detected: boolean; alarm: boolean } {
  const rng = createPrng(seed);
  const order = runs.map((_, i) => i);
  for (let i = order.length - 1; i > 0; i--) {
    const j = rng.nextInt(i + 1);
    [order[i], order[j]] = [order[j]!, order[i]!];
  }
  let detected = false;
  let alarm = false;
  for (const key of model.keys) {
    const c = model.cases.get(key)!;
    const hit = plant.placement.kind !== "none" && affects(plant.placement, c.scheme);
    const pts = order.map((r, k) => {
      const s = [...runs[r]!.cases.get(key)!.samples].sort((a, b) => a - b);
      const slow = hit && k >= order.length - stepRuns ? Math.log(1 + plant.slowdown) : 0;
      return { runId: String(k), y: Math.log(s[s.length >> 1]!) + slow, problemId: c.problemId };
    });
    const d = driftFinding(key, pts, t);
    if (!d || d.finding.direction !== "regression") continue;
    if (hit) detected = true;
    else alarm = true;
  }
  return { detected, alarm };
}
