/**
 * The upload payload ("arcwatch-run/1"): one finished run with its suite, problems and cases, as
 * posted by `npm run bench -- --upload <url> --token <token>` and stored by the server through the
 * same recording functions as a command-line run (app/models/recording.server.ts). Pure: schema
 * and types only. A payload case is also the one shape in which any case is recorded
 * (`CaseRecord`), whether it arrives from a worker, a job or an upload.
 */
import { z } from "zod";
import { PROBLEM_ID_PATTERN } from "~/engine/problem/files";
import { MACHINE_CLASS_PATTERN } from "./shards";
import { suiteSchema } from "./suite";

/**
 * How far an uploaded time may lie in the future of the server's clock: runners' clocks drift
 * by seconds, not minutes, where NTP runs (five minutes is common practice, no source).
 */
export const CLOCK_SKEW_MS = 5 * 60_000;

/** The problem-id rule of the library (app/engine/problem/files.ts), with its message. */
const problemId = z
  .string()
  .regex(PROBLEM_ID_PATTERN, "a problem id: a letter or digit, then up to 127 letters, digits, '_', '.' or '-'")
  .refine((id) => !id.includes(".."), "a problem id may not contain '..'");

/** An ISO date-time not later than the server's clock plus CLOCK_SKEW_MS (checked when validated). */
const pastDate = z
  .string()
  .datetime()
  .refine((v) => Date.parse(v) <= Date.now() + CLOCK_SKEW_MS, "lies in the future (later than this server's clock plus 5 minutes)");

export const PAYLOAD_FORMAT = "arcwatch-run/1";

/** The per-case numbers stored, uploaded and shown alike (same names in the table and the payload). */
export const CASE_NUMBER_FIELDS = [
  "objective", "objectiveErrorAbs", "objectiveErrorRel", "finalTime", "finalTimeError", "stateError", "controlError",
  "resimMiss", "constraintViolation", "iterations", "medianSeconds", "meanSeconds", "stddevSeconds", "minSeconds",
] as const;
export type CaseNumberField = (typeof CASE_NUMBER_FIELDS)[number];

/** The CASE_NUMBER_FIELDS of a case row or payload case. */
export function caseNumbers<T extends Record<CaseNumberField, number | null | undefined>>(c: T): Pick<T, CaseNumberField> {
  const out = {} as Pick<T, CaseNumberField>;
  for (const k of CASE_NUMBER_FIELDS) out[k] = c[k];
  return out;
}


const finite = z.number().finite();
const nullableNum = finite.nullable();
/** Errors, violations and times: never negative. */
const nonNegative = finite.nonnegative().nullable();

export const casePayloadSchema = z.object({
  caseKey: z.string().min(1).max(300),
  problemId,
  problemVersionHash: z.string().min(1).max(128),
  scheme: z.string().min(1).max(64),
  intervals: z.number().int().positive(),
  degree: z.number().int().positive().nullable(),
  status: z.string().min(1).max(64),
  objective: nullableNum,
  objectiveErrorAbs: nonNegative,
  objectiveErrorRel: nonNegative,
  finalTime: nullableNum,
  finalTimeError: nonNegative,
  stateError: nonNegative,
  controlError: nonNegative,
  resimMiss: nonNegative,
  constraintViolation: nonNegative,
  iterations: z.number().int().min(0).nullable(),
  medianSeconds: nonNegative,
  meanSeconds: nonNegative,
  stddevSeconds: nonNegative,
  minSeconds: nonNegative,
  samples: z.array(finite.nonnegative()).max(100_000),
  arcs: z.unknown().optional(),
  trajectory: z.unknown().optional(),
  iterationLog: z.unknown().optional(),
  message: z.string().max(20_000).nullable(),
  /** Mesh error estimate and adaptive refinement (case_results.mesh_* columns); absent from older payloads. */
  mesh: z
    .object({
      errorMax: nullableNum,
      estimate: z.object({ method: z.string().max(64), t: z.array(finite).max(200_000), error: z.array(nullableNum).max(200_000) }).nullable(),
      points: z.number().int().positive().nullable(),
      tolerance: finite.positive().nullable(),
      passes: z.number().int().min(1).nullable(),
      met: z.boolean().nullable(),
      refinement: z
        .array(z.object({ pass: z.number().int().min(1), intervals: z.number().int().positive(), points: z.number().int().positive(), status: z.string().max(64), iterations: z.number().int().min(0), seconds: finite.nonnegative(), maxEstimate: nullableNum }))
        .max(1000)
        .nullable(),
    })
    .optional(),
});

export const runPayloadSchema = z.object({
  format: z.literal(PAYLOAD_FORMAT),
  run: z.object({
    id: z.string().uuid(),
    commitHash: z.string().min(1).max(64),
    branch: z.string().max(300).nullable(),
    dirty: z.boolean(),
    commitSubject: z.string().max(2000).nullable(),
    commitAuthor: z.string().max(500).nullable(),
    commitDate: pastDate.nullable(),
    machine: z.record(z.string(), z.unknown()),
    machineKey: z.string().min(1).max(128),
    calibrationSeconds: nonNegative,
    startedAt: pastDate,
    finishedAt: pastDate.nullable(),
    status: z.enum(["complete", "interrupted", "failed"]),
    solverLabel: z.string().max(300).nullable(),
    externalRepo: z.string().max(1000).nullable(),
    /** A runner-set machine class label (timings are compared within it); absent: the fingerprint. */
    machineClass: z.string().regex(MACHINE_CLASS_PATTERN, "1-64 letters, digits, '.', '_' or '-'").nullable().optional(),
    /** One shard of a sharded run: index k of count n, and the CI pipeline's id (app/models/run-groups.server.ts). */
    shard: z
      .object({ index: z.number().int().min(1), count: z.number().int().min(1).max(256), pipeline: z.string().min(1).max(200) })
      .strict()
      .refine((s) => s.index <= s.count, { path: ["index"], message: "must be between 1 and count" })
      .nullable()
      .optional(),
  })
    .refine((r) => r.finishedAt === null || Date.parse(r.finishedAt) >= Date.parse(r.startedAt), { path: ["finishedAt"], message: "is before startedAt" }),
  suite: z.object({ name: z.string().min(1), contentHash: z.string().length(64), definition: suiteSchema, thresholds: z.record(z.string(), z.unknown()).nullable() }),
  problems: z.array(z.object({ id: problemId, title: z.string(), description: z.string(), tags: z.array(z.string()), versionHash: z.string(), json: z.string().max(2_000_000) })),
  cases: z
    .array(casePayloadSchema)
    .max(100_000)
    .superRefine((cases, ctx) => {
      const first = new Map<string, number>();
      cases.forEach((c, i) => {
        const j = first.get(c.caseKey);
        if (j !== undefined) ctx.addIssue({ code: "custom", path: [i, "caseKey"], message: `"${c.caseKey}" is also cases[${j}]: a run holds each case once` });
        else first.set(c.caseKey, i);
      });
    }),
});

export type RunPayload = z.infer<typeof runPayloadSchema>;
/** One case as recorded: the payload's case shape. */
export type CaseRecord = z.infer<typeof casePayloadSchema>;
/** The run fields of a payload (what `insertRun` stores besides suite and job). */
export type RunRecord = RunPayload["run"];
