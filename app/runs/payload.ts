/**
 * The upload payload ("arcwatch-run/1"): one finished run with its suite, problems and cases, as
 * posted by `npm run bench -- --upload <url> --token <token>` and stored by the server through the
 * same recording functions as a command-line run (app/models/recording.server.ts). Pure: schema
 * and types only. A payload case is also the one shape in which any case is recorded
 * (`CaseRecord`), whether it arrives from a worker, a job or an upload.
 */
import { z } from "zod";
import { suiteSchema } from "./suite";

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

export const casePayloadSchema = z.object({
  caseKey: z.string().min(1).max(300),
  problemId: z.string().min(1).max(200),
  problemVersionHash: z.string().min(1).max(128),
  scheme: z.string().min(1).max(64),
  intervals: z.number().int().positive(),
  degree: z.number().int().positive().nullable(),
  status: z.string().min(1).max(64),
  objective: nullableNum,
  objectiveErrorAbs: nullableNum,
  objectiveErrorRel: nullableNum,
  finalTime: nullableNum,
  finalTimeError: nullableNum,
  stateError: nullableNum,
  controlError: nullableNum,
  resimMiss: nullableNum,
  constraintViolation: nullableNum,
  iterations: z.number().int().min(0).nullable(),
  medianSeconds: nullableNum,
  meanSeconds: nullableNum,
  stddevSeconds: nullableNum,
  minSeconds: nullableNum,
  samples: z.array(finite.nonnegative()).max(100_000),
  arcs: z.unknown().optional(),
  trajectory: z.unknown().optional(),
  iterationLog: z.unknown().optional(),
  message: z.string().max(20_000).nullable(),
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
    commitDate: z.string().datetime().nullable(),
    machine: z.record(z.string(), z.unknown()),
    machineKey: z.string().min(1).max(128),
    calibrationSeconds: nullableNum,
    startedAt: z.string().datetime(),
    finishedAt: z.string().datetime().nullable(),
    status: z.enum(["complete", "interrupted", "failed"]),
    solverLabel: z.string().max(300).nullable(),
    externalRepo: z.string().max(1000).nullable(),
  }),
  suite: z.object({ name: z.string().min(1), contentHash: z.string().length(64), definition: suiteSchema, thresholds: z.record(z.string(), z.unknown()).nullable() }),
  problems: z.array(z.object({ id: z.string().min(1), title: z.string(), description: z.string(), tags: z.array(z.string()), versionHash: z.string(), json: z.string().max(2_000_000) })),
  cases: z.array(casePayloadSchema).max(100_000),
});

export type RunPayload = z.infer<typeof runPayloadSchema>;
/** One case as recorded: the payload's case shape. */
export type CaseRecord = z.infer<typeof casePayloadSchema>;
/** The run fields of a payload (what `insertRun` stores besides suite and job). */
export type RunRecord = RunPayload["run"];
