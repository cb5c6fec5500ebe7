/**
 * Pooled evidence: besides the per-case rule, the speed shift of each scheme, each problem and the
 * whole suite is estimated from all their cases together (app/engine/stats/hierarchical-bootstrap.ts:
 * geometric mean of the cases' median ratios, two-stage bootstrap interval over cases and samples)
 * and reported as ONE finding with its interval and its member cases:
 *     "hermite-simpson, all 5 cases: ×1.38 [1.25, 1.52]".
 *
 * A group is flagged when it has at least `pooledMinCases` timed cases, its estimate exceeds
 * `pooledSpeedRatio` (or falls below its inverse for an improvement) and the interval at
 * `confidence` excludes 1. A slowdown confined to one scheme also moves the problem groups and the
 * suite; those are reported only when the cases left after removing the flagged scheme groups'
 * cases are still flagged on their own, so one cause gives one group finding.
 */
import { pooledShift, type PooledCase } from "../engine/stats/hierarchical-bootstrap";
import { median } from "../engine/stats/summary";
import type { CaseSnapshot, Finding } from "./rules";
import { isSolved, type Thresholds } from "./types";

export type GroupScope = "scheme" | "problem" | "suite";
export const GROUP_SCOPES: readonly GroupScope[] = ["scheme", "problem", "suite"];

/** The scheme of a case (from the snapshot, else the key `<problem>/<scheme>/<mesh>`). */
export const schemeOf = (c: Pick<CaseSnapshot, "caseKey" | "scheme">): string => c.scheme ?? c.caseKey.split("/")[1] ?? "";

/** Key of a group finding, stored as the regression's case key: "scheme:lgr", "problem:x", "suite". */
export const groupKey = (scope: GroupScope, name: string | null): string => (scope === "suite" ? "suite:all" : `${scope}:${name}`);

/** Scope and name of a group key, or null for a case key. */
export function parseGroupKey(key: string): { scope: GroupScope; name: string } | null {
  const m = /^(scheme|problem|suite):(.+)$/.exec(key);
  return m ? { scope: m[1] as GroupScope, name: m[2]! } : null;
}

interface Timed {
  key: string;
  problemId: string;
  scheme: string;
  x: number[];
  y: number[];
}

function fmtRatio(r: number): string {
  return r.toFixed(r >= 10 ? 1 : 2);
}

/** FNV-1a of the group key: a reproducible seed per group. */
function seedOf(key: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < key.length; i++) h = Math.imul(h ^ key.charCodeAt(i), 0x01000193);
  return h >>> 0;
}

function judge(members: Timed[], t: Thresholds, key: string): { ratio: number; low: number; high: number; caseRatios: number[]; direction: "regression" | "improvement" } | null {
  if (members.length < t.pooledMinCases) return null;
  const cases: PooledCase[] = members.map((m) => ({ x: m.x, y: m.y }));
  const s = pooledShift(cases, { replicates: t.bootstrapReplicates, confidence: t.confidence, seed: seedOf(key) });
  if (s.ratio > t.pooledSpeedRatio && s.low > 1) return { ...s, direction: "regression" };
  if (s.ratio < 1 / t.pooledSpeedRatio && s.high < 1) return { ...s, direction: "improvement" };
  return null;
}

/** The timed cases two runs share (both solved, at least 3 samples each). */
function timedCases(now: Map<string, CaseSnapshot>, base: Map<string, CaseSnapshot>): Timed[] {
  const timed: Timed[] = [];
  for (const [key, cur] of now) {
    const old = base.get(key);
    if (!old || !isSolved(cur.status) || !isSolved(old.status) || cur.samples.length < 3 || old.samples.length < 3) continue;
    timed.push({ key, problemId: cur.problemId, scheme: schemeOf(cur), x: [...cur.samples], y: [...old.samples] });
  }
  return timed;
}

/** A scheme worth an interleaved A/B although no rule flagged it (`bench --confirm` screening). */
export interface SchemeSuspect {
  scheme: string;
  members: { caseKey: string; problemId: string; ratio: number }[];
  /** Geometric mean of the members' median ratios against the baseline. */
  ratio: number;
  /** The same, divided by that of the run's other cases. */
  relative: number | null;
}

/**
 * Screening for `bench --confirm`: the schemes (with at least `pooledMinCases` timed cases) whose
 * cases moved by more than `screenSpeedRatio` (default 1.05) as a point estimate, against the
 * baseline or against the run's other schemes (a run that was fast as a whole hides a one-scheme slowdown from the
 * first), with no evidence required: the interleaved A/B that follows decides. Measured on the
 * quick suite's recorded noise (bench/detection-power.bench.ts): about 2.9 schemes per unchanged run at ×1.05.
 */
export function schemeSuspects(now: Map<string, CaseSnapshot>, base: Map<string, CaseSnapshot>, t: Thresholds): SchemeSuspect[] {
  const timed = timedCases(now, base).map((c) => ({ ...c, ln: Math.log(median(c.x) / median(c.y)) }));
  const mean = (v: { ln: number }[]) => v.reduce((a, c) => a + c.ln, 0) / v.length;
  const floor = t.screenSpeedRatio > 0 ? Math.log(t.screenSpeedRatio) : -Infinity;
  const out: SchemeSuspect[] = [];
  for (const scheme of [...new Set(timed.map((c) => c.scheme))]) {
    const members = timed.filter((c) => c.scheme === scheme);
    const others = timed.filter((c) => c.scheme !== scheme);
    if (members.length < t.pooledMinCases || !members.every((m) => Number.isFinite(m.ln))) continue;
    const ln = mean(members);
    const rel = others.length ? ln - mean(others) : null;
    if (ln > floor || (rel !== null && rel > floor)) {
      out.push({ scheme, members: members.map((m) => ({ caseKey: m.key, problemId: m.problemId, ratio: Math.exp(m.ln) })), ratio: Math.exp(ln), relative: rel === null ? null : Math.exp(rel) });
    }
  }
  return out;
}

/**
 * Group findings of one run against its baseline (pure given the rows). `calibrationFactor` and
 * the case-level calibrations are applied as in the per-case rule (./rules.ts).
 */
export function pooledFindings(now: Map<string, CaseSnapshot>, base: Map<string, CaseSnapshot>, t: Thresholds): Finding[] {
  const timed = timedCases(now, base);
  const groups = (scope: GroupScope, pool: Timed[]): Map<string, Timed[]> => {
    const out = new Map<string, Timed[]>();
    for (const c of pool) {
      const name = scope === "scheme" ? c.scheme : scope === "problem" ? c.problemId : "all";
      out.set(name, [...(out.get(name) ?? []), c]);
    }
    return out;
  };
  const findings: Finding[] = [];
  const explained = new Set<string>();
  const emit = (scope: GroupScope, name: string, members: Timed[], v: NonNullable<ReturnType<typeof judge>>) => {
    const key = groupKey(scope, name);
    const label = scope === "suite" ? "whole suite" : name;
    const before = median(members.map((m) => median(m.y)));
    const after = median(members.map((m) => median(m.x)));
    findings.push({
      caseKey: key,
      problemId: scope === "problem" ? name : members[0]!.problemId,
      kind: "speed",
      direction: v.direction,
      metric: "pooled_median_ratio",
      before,
      after,
      ratio: v.ratio,
      pValue: null,
      ciLow: v.low,
      ciHigh: v.high,
      detail: `${label}, all ${members.length} cases: ×${fmtRatio(v.ratio)} [${fmtRatio(v.low)}, ${fmtRatio(v.high)}] (geometric mean of median ratios, ${Math.round(t.confidence * 100)} % two-stage bootstrap over cases and samples)`,
      scope,
      members: members.map((m, i) => ({ caseKey: m.key, problemId: m.problemId, ratio: Number.isFinite(v.caseRatios[i]!) ? v.caseRatios[i]! : null })),
    });
  };
  // Schemes first: the most specific cause a transcription change has.
  for (const [name, members] of groups("scheme", timed)) {
    const v = judge(members, t, groupKey("scheme", name));
    if (!v) continue;
    emit("scheme", name, members, v);
    for (const m of members) explained.add(`${v.direction}|${m.key}`);
  }
  // Problems, then the suite: only with what the flagged schemes do not already explain.
  for (const scope of ["problem", "suite"] as const) {
    for (const [name, members] of groups(scope, timed)) {
      const v = judge(members, t, groupKey(scope, name));
      if (!v) continue;
      const rest = members.filter((m) => !explained.has(`${v.direction}|${m.key}`));
      if (rest.length < members.length) {
        const w = judge(rest, t, groupKey(scope, name));
        if (!w || w.direction !== v.direction) continue;
      }
      emit(scope, name, members, v);
      if (scope === "problem") for (const m of members) explained.add(`${v.direction}|${m.key}`);
    }
  }
  return findings;
}
