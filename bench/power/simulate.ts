/**
 * Simulated suite runs from measured noise (./noise.ts) judged by the product's own rules:
 * the per-case rule (app/runs/rules.ts compareCases), pooled evidence (app/runs/pooled.ts) and
 * the interleaved A/B verdict (the statistics of bench/runner/ab.ts on simulated trials).
 *
 * A trial draws a baseline run and a current run of every case: run shift R and case shift e from
 * their observed values with a random sign, each sample's residual from the case's own observed
 * within-run residuals. A planted slowdown multiplies the current samples of the affected cases
 * by (1 + size). A planted accuracy loss multiplies the affected cases' errors (which do not vary
 * between reruns of one commit: the solver is deterministic). An A/B sitting is `blocks` blocks of
 * A B B A / B A A B trials of `repeats` solves; one block shift hits all four trials (the load of
 * the moment), each solve draws its own residual; the verdict is bench/runner/ab.ts's.
 */
import { pooledShift } from "../../app/engine/stats/hierarchical-bootstrap";
import { createPrng, type Prng } from "../../app/engine/stats/prng";
import { pooledFindings } from "../../app/runs/pooled";
import { compareCases, driftFinding, type CaseSnapshot, type Finding } from "../../app/runs/rules";
import type { Thresholds } from "../../app/runs/types";
import { AB_MIN_RATIO } from "../runner/ab";
import type { NoiseModel } from "./noise";

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
  accuracy: { detected: boolean; alarm: boolean; findings: number };
}

const pick = <T>(rng: Prng, v: readonly T[]): T => v[rng.nextInt(v.length)]!;
const signed = (rng: Prng, v: readonly number[]) => (rng.next() < 0.5 ? -1 : 1) * pick(rng, v);

const affects = (p: Placement, scheme: string) => p.kind === "suite" || (p.kind === "scheme" && p.scheme === scheme);

/** One simulated run of every case in the model. */
function simulateRun(model: NoiseModel, rng: Prng, repeats: number, plant: Plant | null): Map<string, CaseSnapshot> {
  const R = signed(rng, model.runShifts);
  const out = new Map<string, CaseSnapshot>();
  let id = 1;
  for (const key of model.keys) {
    const c = model.cases.get(key)!;
    const hit = plant !== null && affects(plant.placement, c.scheme);
    const slow = hit ? 1 + plant!.slowdown : 1;
    const accuracy = hit ? plant!.accuracyFactor : 1;
    const centre = c.mu + R + signed(rng, model.caseShifts);
    const samples = Array.from({ length: repeats }, () => Math.exp(centre + pick(rng, c.within)) * slow);
    const t = c.template;
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

/** The A/B verdict over `keys` (pooled as bench/runner/ab.ts pools its cases). */
function simulateAb(model: NoiseModel, rng: Prng, keys: string[], plant: Plant, blocks: number, repeats: number, seed: number, replicates: number): boolean {
  const perCase = keys.map((key) => {
    const c = model.cases.get(key)!;
    const slow = affects(plant.placement, c.scheme) ? 1 + plant.slowdown : 1;
    const cases = [];
    for (let b = 0; b < blocks; b++) {
      const beta = signed(rng, model.caseShifts);
      const draw = (f: number) => Array.from({ length: repeats }, () => Math.exp(c.mu + beta + pick(rng, c.within)) * f);
      // A B B A (or B A A B): two trials per side per block.
      cases.push({ x: [...draw(slow), ...draw(slow)], y: [...draw(1), ...draw(1)] });
    }
    return pooledShift(cases, { confidence: 0.99, seed: 7, replicates });
  });
  const slower = (ratio: number, low: number) => ratio > AB_MIN_RATIO && low > 1;
  if (perCase.length === 1) return slower(perCase[0]!.ratio, perCase[0]!.low);
  const lnMean = perCase.reduce((a, s) => a + Math.log(s.ratio), 0) / perCase.length;
  const s = pooledShift(
    perCase.map((c) => ({ x: c.caseRatios, y: c.caseRatios.map(() => 1) })),
    { confidence: 0.99, seed: seed + 11, replicates },
  );
  return slower(Math.exp(lnMean), s.low);
}

export interface TrialOptions {
  thresholds: Thresholds;
  repeats: number;
  /** Run the A/B simulation too (costs most of the time). */
  ab: boolean;
  abBlocks: number;
  abRepeats: number;
  /** Bootstrap replicates of the A/B intervals (bench/runner/ab.ts uses 2000). */
  abReplicates: number;
}

export function runTrial(model: NoiseModel, plant: Plant, seed: number, o: TrialOptions): TrialOutcome {
  const rng = createPrng(seed);
  const base = simulateRun(model, rng, o.repeats, null);
  const now = simulateRun(model, rng, o.repeats, plant);
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
  const cases = compareCases(now, base, o.thresholds, 1).filter(regress);
  const speedCases = cases.filter((f) => f.kind === "speed");
  const accuracy = cases.filter((f) => f.kind === "accuracy");
  const groups = pooledFindings(now, base, o.thresholds, 1).filter(regress);
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
    const slower = simulateAb(model, rng, keys, plant, o.abBlocks, o.abRepeats, seed, o.abReplicates);
    ab = { detected: speedPlanted && slower, alarm: !speedPlanted && slower };
  }
  return { perCase, pooled, any, ab, accuracy: acc };
}

/**
 * The drift rule (app/runs/rules.ts driftFinding) on simulated histories: `history` runs of every
 * case, the last one the current run; a planted step slows the affected cases from run
 * `history − stepRuns` on. Returns whether an affected case was flagged and whether any case
 * outside the plant (every case, for an unchanged history) was flagged as a regression.
 */
export function driftTrial(model: NoiseModel, plant: Plant, seed: number, t: Thresholds, repeats: number, history: number, stepRuns: number): { detected: boolean; alarm: boolean } {
  const rng = createPrng(seed);
  const shifts = Array.from({ length: history }, () => signed(rng, model.runShifts));
  let detected = false;
  let alarm = false;
  for (const key of model.keys) {
    const c = model.cases.get(key)!;
    const hit = plant.placement.kind !== "none" && affects(plant.placement, c.scheme);
    const pts = shifts.map((R, r) => {
      const w = Array.from({ length: repeats }, () => pick(rng, c.within)).sort((a, b) => a - b)[repeats >> 1]!;
      const slow = hit && r >= history - stepRuns ? Math.log(1 + plant.slowdown) : 0;
      return { runId: String(r), y: c.mu + R + signed(rng, model.caseShifts) + w + slow, problemId: c.problemId };
    });
    const d = driftFinding(key, pts, t);
    if (!d || d.finding.direction !== "regression") continue;
    if (hit) detected = true;
    else alarm = true;
  }
  return { detected, alarm };
}
