/**
 * The upload payload ("arcwatch-run/1"): one finished run with its suite, problems and cases,
 * as posted by `npm run bench -- --upload <url> --token <token>` and ingested by the server.
 * The server imports `runPayloadSchema` to validate and `ingestRunPayload` to store (then
 * `detectRegressions` from ./detect.ts, as the command line does).
 */
import { and, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "../../app/db/client.server";
import { caseResults, problemVersions, problems, runs, suites, timingSamples } from "../../app/db/schema";
import { suiteSchema, canonicalJson, sha256 } from "./suite";
import { toPlain } from "./record";

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

const iso = (d: Date | null | undefined) => (d ? d.toISOString() : null);

/** Reads a recorded run back into an upload payload. */
export function buildRunPayload(db: Db, runId: string): RunPayload {
  const row = db.select({ run: runs, suite: suites }).from(runs).innerJoin(suites, eq(runs.suiteId, suites.id)).where(eq(runs.id, runId)).get();
  if (!row) throw new Error(`run ${runId} not found`);
  const { run, suite } = row;
  if (run.status === "running") throw new Error(`run ${runId} is still running`);
  const cases = db.select({ c: caseResults, samples: timingSamples.samplesJson }).from(caseResults).leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id)).where(eq(caseResults.runId, runId)).all();
  const versionHashes = [...new Set(cases.map((c) => c.c.problemVersionHash))];
  const versions = versionHashes.length
    ? db.select({ v: problemVersions, p: problems }).from(problemVersions).innerJoin(problems, eq(problems.id, problemVersions.problemId)).where(inArray(problemVersions.contentHash, versionHashes)).all()
    : [];
  return {
    format: PAYLOAD_FORMAT,
    run: {
      id: run.id,
      commitHash: run.commitHash,
      branch: run.branch,
      dirty: run.dirty,
      commitSubject: run.commitSubject,
      commitAuthor: run.commitAuthor,
      commitDate: iso(run.commitDate),
      machine: (run.machineJson ?? {}) as Record<string, unknown>,
      machineKey: run.machineKey,
      calibrationSeconds: run.calibrationSeconds,
      startedAt: run.startedAt.toISOString(),
      finishedAt: iso(run.finishedAt),
      status: run.status as "complete" | "interrupted" | "failed",
      solverLabel: run.solverLabel,
      externalRepo: run.externalRepo,
    },
    suite: { name: suite.name, contentHash: suite.contentHash, definition: suite.definitionJson as RunPayload["suite"]["definition"], thresholds: (suite.thresholdsJson ?? null) as Record<string, unknown> | null },
    problems: versions.map(({ v, p }) => ({ id: p.id, title: p.title, description: p.description, tags: p.tagsJson, versionHash: v.contentHash, json: v.json })),
    cases: cases.map(({ c, samples }) => ({
      caseKey: c.caseKey,
      problemId: c.problemId,
      problemVersionHash: c.problemVersionHash,
      scheme: c.scheme,
      intervals: c.intervals,
      degree: c.degree,
      status: c.status,
      ...caseNumbers(c),
      samples: samples ?? [],
      arcs: c.arcsJson ?? undefined,
      trajectory: c.trajectoryJson ?? undefined,
      iterationLog: c.iterationLogJson ?? undefined,
      message: c.message,
    })),
  };
}

/**
 * Stores a validated payload in one transaction: the suite (by name and content hash), the
 * problems and versions it needs, the run (same id; a second upload of the same id is refused)
 * and its cases with their samples. The suite's content hash is re-computed and must match.
 */
export function ingestRunPayload(db: Db, input: unknown, options: { jobId?: number | null } = {}): { runId: string } {
  const parsed = runPayloadSchema.safeParse(input);
  if (!parsed.success) {
    throw new Error(`invalid run payload: ${parsed.error.issues.slice(0, 10).map((i) => `${i.path.join(".") || "(root)"}: ${i.message}`).join("; ")}`);
  }
  const p = parsed.data;
  const hash = sha256(canonicalJson(p.suite.definition));
  if (hash !== p.suite.contentHash) throw new Error(`invalid run payload: suite.contentHash ${p.suite.contentHash} does not match its definition (${hash})`);
  return db.transaction((tx) => {
    if (tx.select({ id: runs.id }).from(runs).where(eq(runs.id, p.run.id)).get()) throw new Error(`run ${p.run.id} was already uploaded`);
    tx.insert(suites).values({ name: p.suite.name, contentHash: p.suite.contentHash, definitionJson: p.suite.definition, thresholdsJson: p.suite.thresholds }).onConflictDoNothing().run();
    const suiteRow = tx.select({ id: suites.id }).from(suites).where(and(eq(suites.name, p.suite.name), eq(suites.contentHash, p.suite.contentHash))).get();
    if (!suiteRow) throw new Error("suite row missing after insert");
    for (const pr of p.problems) {
      tx.insert(problems).values({ id: pr.id, title: pr.title, description: pr.description, tagsJson: pr.tags }).onConflictDoNothing().run();
      tx.insert(problemVersions).values({ problemId: pr.id, contentHash: pr.versionHash, json: pr.json }).onConflictDoNothing().run();
    }
    for (const c of p.cases) tx.insert(problems).values({ id: c.problemId, title: c.problemId }).onConflictDoNothing().run();
    const r = p.run;
    tx.insert(runs)
      .values({
        id: r.id,
        suiteId: suiteRow.id,
        commitHash: r.commitHash,
        branch: r.branch,
        dirty: r.dirty,
        commitSubject: r.commitSubject,
        commitAuthor: r.commitAuthor,
        commitDate: r.commitDate ? new Date(r.commitDate) : null,
        machineJson: r.machine,
        machineKey: r.machineKey,
        startedAt: new Date(r.startedAt),
        finishedAt: r.finishedAt ? new Date(r.finishedAt) : null,
        status: r.status,
        calibrationSeconds: r.calibrationSeconds,
        solverLabel: r.solverLabel,
        externalRepo: r.externalRepo,
        jobId: options.jobId ?? null,
      })
      .run();
    for (const c of p.cases) {
      const row = tx
        .insert(caseResults)
        .values({
          runId: r.id,
          problemId: c.problemId,
          problemVersionHash: c.problemVersionHash,
          caseKey: c.caseKey,
          scheme: c.scheme,
          intervals: c.intervals,
          degree: c.degree,
          status: c.status,
          ...caseNumbers(c),
          sampleCount: c.samples.length,
          arcsJson: toPlain(c.arcs ?? null),
          trajectoryJson: toPlain(c.trajectory ?? null),
          iterationLogJson: toPlain(c.iterationLog ?? null),
          message: c.message,
        })
        .returning({ id: caseResults.id })
        .get();
      if (c.samples.length) tx.insert(timingSamples).values({ caseResultId: row.id, samplesJson: c.samples }).run();
    }
    return { runId: r.id };
  });
}
