/**
 * From what a worker measured to what is recorded: a `CaseOutcome` (report + timing samples)
 * becomes a `CaseRecord` (the upload payload's case shape, ./payload.ts), the one shape every
 * recorded case takes, so that a case measured here and a case uploaded from elsewhere are written
 * by the same insert (app/models/recording.server.ts).
 *
 * Numbers the case table has no column for travel in `iterationLog` as
 *   { log, extra: { degree, variant, nlpSize, transcribeSeconds, solveSeconds, wallSeconds,
 *                   calibrationSeconds, costateMax, switchingTimes, maxPathViolation, q1, q3 } }
 * (`extra.calibrationSeconds` is read back by detection, see ./rules.ts `caseCalibration`).
 */
import { summarize } from "../engine/stats/summary";
import type { CaseRecord } from "./payload";
import type { CaseOutcome } from "./types";

/** Typed arrays → plain arrays, NaN/±Infinity → null, recursively (for JSON columns). */
export function toPlain(value: unknown): unknown {
  if (value === null || value === undefined) return value ?? null;
  if (typeof value === "number") return Number.isFinite(value) ? value : null;
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) return Array.from(value as unknown as ArrayLike<number>, (v) => toPlain(v));
  if (Array.isArray(value)) return value.map(toPlain);
  if (value instanceof Map) return Object.fromEntries([...value.entries()].map(([k, v]) => [String(k), toPlain(v)]));
  if (typeof value === "object") {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value as Record<string, unknown>)) if (typeof v !== "function") out[k] = toPlain(v);
    return out;
  }
  return value;
}

const num = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

/** The version hash recorded for a case whose problem did not load (no report). */
export const UNKNOWN_VERSION = "unknown";

/** The record of one measured case. */
export function caseRecordFromOutcome(outcome: CaseOutcome): CaseRecord {
  const { spec, report } = outcome;
  const s = outcome.samples.length > 0 ? summarize(outcome.samples) : null;
  const extra = {
    degree: spec.degree ?? null,
    variant: spec.variant ?? null,
    nlpSize: report?.nlpSize ?? null,
    transcribeSeconds: num(report?.transcribeSeconds),
    solveSeconds: num(report?.solveSeconds),
    wallSeconds: outcome.wallSeconds,
    calibrationSeconds: outcome.calibrationSeconds ?? null,
    costateMax: num(report?.errors?.costateMax),
    switchingTimes: num(report?.errors?.switchingTimes),
    maxPathViolation: num(report?.resim?.maxPathViolation),
    q1: s?.q1 ?? null,
    q3: s?.q3 ?? null,
  };
  const iterations = num(report?.iterations);
  return {
    caseKey: spec.key,
    problemId: spec.problemId,
    problemVersionHash: report?.versionHash ?? UNKNOWN_VERSION,
    scheme: spec.scheme,
    intervals: spec.intervals,
    degree: spec.degree ?? null,
    status: outcome.status,
    objective: num(report?.objective),
    objectiveErrorAbs: num(report?.errors?.objectiveAbs),
    objectiveErrorRel: num(report?.errors?.objectiveRel),
    finalTime: num(report?.finalTime),
    finalTimeError: num(report?.errors?.finalTimeAbs),
    stateError: num(report?.errors?.stateMax),
    controlError: num(report?.errors?.controlMax),
    resimMiss: num(report?.resim?.finalMiss),
    constraintViolation: num(report?.constraintViolation),
    iterations: iterations === null ? null : Math.max(0, Math.round(iterations)),
    medianSeconds: s?.median ?? null,
    meanSeconds: s?.mean ?? null,
    stddevSeconds: s?.stddev ?? null,
    minSeconds: s?.min ?? null,
    samples: outcome.samples.filter((v) => Number.isFinite(v) && v >= 0),
    arcs: toPlain(report?.arcs ?? null),
    trajectory: toPlain(report?.trajectory ?? null),
    iterationLog: toPlain({ log: report?.log ?? null, extra }),
    message: outcome.message,
  };
}
