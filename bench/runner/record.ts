/**
 * Writing runs into SQLite (app/db/schema.ts). Every finished case is written in its own
 * synchronous transaction (case row + timing samples + its problem and problem version when new),
 * so a run that is killed keeps every case that finished and the file stays consistent.
 *
 * Columns the schema does not have yet are kept in JSON columns:
 *   case_results.iteration_log_json = { log, extra: { degree, variant, nlpSize, transcribeSeconds,
 *     solveSeconds, wallSeconds, calibrationSeconds, costateMax, switchingTimes, maxPathViolation, q1, q3 } }
 *   runs.machine_json = { ...machine, calibration: { before, after, kernel }, suite: { file } }
 */
import fs from "node:fs";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import type { Db } from "../../app/db/client.server";
import { caseResults, problemVersions, problems, runs, suites, timingSamples, type RunStatus } from "../../app/db/schema";
import { summarize } from "../../app/engine/stats/summary";
import type { CommitMeta } from "./git-meta";
import type { MachineInfo } from "./machine";
import type { LoadedSuite } from "./suite";
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

export function ensureSuite(db: Db, suite: LoadedSuite): number {
  const name = suite.definition.name;
  db.insert(suites)
    .values({ name, contentHash: suite.contentHash, definitionJson: suite.definition, thresholdsJson: suite.thresholds })
    .onConflictDoNothing()
    .run();
  const row = db.select({ id: suites.id }).from(suites).where(and(eq(suites.name, name), eq(suites.contentHash, suite.contentHash))).get();
  if (!row) throw new Error(`suite row for ${name} could not be created`);
  return row.id;
}

export interface NewRunInput {
  id?: string;
  suiteId: number;
  commit: CommitMeta;
  machine: MachineInfo;
  machineKey: string;
  calibrationSeconds: number | null;
  extraMachine?: Record<string, unknown>;
  solverLabel?: string | null;
  externalRepo?: string | null;
  jobId?: number | null;
  startedAt?: Date;
}

export function createRun(db: Db, input: NewRunInput): string {
  const id = input.id ?? crypto.randomUUID();
  db.insert(runs)
    .values({
      id,
      suiteId: input.suiteId,
      commitHash: input.commit.commitHash,
      branch: input.commit.branch,
      dirty: input.commit.dirty,
      commitSubject: input.commit.subject,
      commitAuthor: input.commit.author,
      commitDate: input.commit.date,
      machineJson: { ...input.machine, ...(input.extraMachine ?? {}) },
      machineKey: input.machineKey,
      startedAt: input.startedAt ?? new Date(),
      status: "running",
      calibrationSeconds: input.calibrationSeconds,
      solverLabel: input.solverLabel ?? null,
      externalRepo: input.externalRepo ?? null,
      jobId: input.jobId ?? null,
    })
    .run();
  return id;
}

/** Title/description/tags and raw text of a problem folder, for the problems tables. */
function problemFiles(problemsDir: string, problemId: string): { title: string; description: string; tags: string[]; json: string } {
  const file = path.join(problemsDir, problemId, "problem.json");
  try {
    const json = fs.readFileSync(file, "utf8");
    const parsed = JSON.parse(json) as { title?: unknown; description?: unknown; tags?: unknown };
    return {
      title: typeof parsed.title === "string" ? parsed.title : problemId,
      description: typeof parsed.description === "string" ? parsed.description : "",
      tags: Array.isArray(parsed.tags) ? parsed.tags.filter((t): t is string => typeof t === "string") : [],
      json,
    };
  } catch {
    return { title: problemId, description: "", tags: [], json: "{}" };
  }
}

/** Writes one finished case (and its samples) in one transaction; returns the case_results id. */
export function recordCase(db: Db, runId: string, outcome: CaseOutcome, problemsDir: string): number {
  const { spec, report } = outcome;
  const files = problemFiles(problemsDir, spec.problemId);
  const versionHash = report?.versionHash ?? "unknown";
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
  return db.transaction((tx) => {
    tx.insert(problems).values({ id: spec.problemId, title: files.title, description: files.description, tagsJson: files.tags }).onConflictDoNothing().run();
    if (versionHash !== "unknown") {
      tx.insert(problemVersions).values({ problemId: spec.problemId, contentHash: versionHash, json: files.json }).onConflictDoNothing().run();
    }
    const row = tx
      .insert(caseResults)
      .values({
        runId,
        problemId: spec.problemId,
        problemVersionHash: versionHash,
        caseKey: spec.key,
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
        iterations: num(report?.iterations),
        medianSeconds: s?.median ?? null,
        meanSeconds: s?.mean ?? null,
        stddevSeconds: s?.stddev ?? null,
        minSeconds: s?.min ?? null,
        sampleCount: outcome.samples.length,
        arcsJson: toPlain(report?.arcs ?? null),
        trajectoryJson: toPlain(report?.trajectory ?? null),
        iterationLogJson: toPlain({ log: report?.log ?? null, extra }),
        message: outcome.message,
      })
      .returning({ id: caseResults.id })
      .get();
    if (outcome.samples.length > 0) tx.insert(timingSamples).values({ caseResultId: row.id, samplesJson: outcome.samples }).run();
    return row.id;
  });
}

export function finishRun(db: Db, runId: string, status: RunStatus, machinePatch?: Record<string, unknown>): void {
  db.transaction((tx) => {
    if (machinePatch) {
      const row = tx.select({ m: runs.machineJson }).from(runs).where(eq(runs.id, runId)).get();
      const merged = { ...((row?.m as Record<string, unknown>) ?? {}), ...machinePatch };
      tx.update(runs).set({ machineJson: merged }).where(eq(runs.id, runId)).run();
    }
    tx.update(runs).set({ status, finishedAt: new Date() }).where(eq(runs.id, runId)).run();
  });
}
