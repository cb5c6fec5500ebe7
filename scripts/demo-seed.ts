/**
 * Demo results for a first start (`npm start` on an empty database), so that every page has
 * content:
 *
 * 1. Real results: the quick suite (bench/suites/quick.json) run on the current checkout by the
 *    runner itself (`runSuite`), recorded like any command-line run (not marked demo: it is a
 *    real measurement of this machine).
 * 2. A demo history on the branch `demo/heron-mesh-study`: DEMO_COMMITS invented commits whose
 *    cases are the real cases of step 1 with timing samples scaled by a small deterministic
 *    jitter, plus three planted events — a speed regression (one case ×1.8 slower from commit 5),
 *    an accuracy regression (another case's solution moved 40 times farther from the reference
 *    from commit 8: objective, trajectory and errors together, see ./demo-accuracy.ts) and an
 *    improvement (the slow case back to ×0.55 from commit 10). Every run is `isDemo: true`, its commit subject
 *    starts with "Demo:", its machine record says `demo: true`, and the pages show a "demo data"
 *    badge. Regressions are found by the runner's own rule code (`compareCases`, the quick
 *    suite's thresholds) between consecutive demo commits, not written by hand.
 *
 * Skipped when the database already holds runs, when ARCWATCH_DEMO_SEED=0, and inside vitest
 * (test servers seed accounts only) unless ARCWATCH_DEMO_SEED=1.
 *
 * It lives beside the command line, not in app/: it runs the benchmark runner (bench/runner), which
 * sits above the app's layers. scripts/seed.ts adds it after the app's own seeders.
 */
import { createHash } from "node:crypto";
import path from "node:path";
import { eq, sql } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults, regressionEvents, regressions, runs, timingSamples, type CaseResultRow } from "~/db/schema";
import type { Seeder } from "~/db/seed.server";
import { median } from "~/engine/stats/summary";
import { compareCases } from "~/runs/rules";
import { loadSuite, suitePath } from "~/runs/suite";
import { runSuite } from "../bench/runner/run-suite";
import { demoSeedWanted, writeDemoProgress, type DemoProgress } from "~/models/demo-progress.server";
import { parseRunEvent } from "~/runs/events";
import { loadFromLibrary } from "~/engine/problem/load";
import { problemLibraryFor } from "~/models/library.server";
import { plantAccuracyLoss, type PlantedAccuracy } from "./demo-accuracy";

export const DEMO_BRANCH = "demo/heron-mesh-study";
export const DEMO_COMMITS = 12;
const SPEED_AT = 4;
const ACCURACY_AT = 7;
const IMPROVEMENT_AT = 9;
/** The planted accuracy regression moves the case's solution this many times farther from the reference. */
export const ACCURACY_FACTOR = 40;
/** Its case is the one whose state error is nearest this (log scale): ×40 then shows on a chart without dwarfing it. */
const ACCURACY_TARGET_STATE_ERROR = 2e-3;

const SUBJECTS = [
  "Demo: start the Heron mesh study from main",
  "Demo: tidy the collocation point tables",
  "Demo: log barrier updates in the iteration table",
  "Demo: share one Jacobian pattern between meshes",
  "Demo: re-order the KKT assembly (slower on one case)",
  "Demo: comments in the line search",
  "Demo: new default for the initial barrier parameter",
  "Demo: looser defect scaling (one case less accurate)",
  "Demo: unit labels in reports",
  "Demo: cache the sparse factor's pattern (faster again)",
  "Demo: guard against empty meshes",
  "Demo: finish the Heron mesh study",
];

/** Deterministic uniform numbers in [0, 1) (mulberry32; common practice, no source). */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

type CaseRows = Parameters<typeof compareCases>[0];

function demoHash(k: number): string {
  return createHash("sha256").update(`arcwatch-demo-commit-${k}`).digest("hex").slice(0, 40);
}

export interface DemoSeedOptions {
  root?: string;
  log?: (line: string) => void;
  /** Suite for the real run (default "quick"). */
  suite?: string;
  /** Stream for the runner's progress bar (default stderr). */
  progress?: NodeJS.WriteStream | null;
  /** The runner's machine-readable progress (app/runs/events.ts), one JSON line per call. */
  events?: { write(line: string): void } | null;
  /** Stops the real run (it is kept, marked interrupted, and no demo history is written). */
  signal?: AbortSignal;
  /** Called when the real run has ended and the demo history is being written. */
  onHistory?: () => void;
}

export { demoSeedWanted } from "~/models/demo-progress.server";

export async function seedDemoResults(db: Db, options: DemoSeedOptions = {}): Promise<{ realRunId: string; demoRunIds: string[]; regressions: number }> {
  const log = options.log ?? (() => {});
  const root = path.resolve(options.root ?? process.cwd());
  const suiteName = options.suite ?? "quick";
  const t0 = Date.now();
  log(`running the ${suiteName} suite on the current checkout (real results; progress below)`);
  const summary = await runSuite({ suite: suiteName, db, root, alerts: false, progress: options.progress === undefined ? process.stderr : options.progress, events: options.events ?? null, signal: options.signal });
  if (summary.status !== "complete") throw new Error(`the ${suiteName} suite run ended ${summary.status} (run ${summary.runId}); no demo history was written`);
  options.onHistory?.();
  log(`real run ${summary.runId}: ${summary.status}, ${summary.outcomes.length} cases in ${summary.elapsedSeconds.toFixed(1)} s`);
  const thresholds = loadSuite(suitePath(suiteName, root)).thresholds;

  const real = db.select().from(runs).where(eq(runs.id, summary.runId)).get()!;
  const template = db.select({ c: caseResults, samples: timingSamples.samplesJson }).from(caseResults).leftJoin(timingSamples, eq(timingSamples.caseResultId, caseResults.id)).where(eq(caseResults.runId, real.id)).all();
  const timed = template.filter((r) => (r.samples?.length ?? 0) >= 3 && r.c.medianSeconds !== null);
  const slowCase = [...timed].sort((a, b) => b.c.medianSeconds! - a.c.medianSeconds!)[0]?.c.caseKey ?? null;
  // The accuracy case: a solved case with a reference objective and trajectory; its demo rows are
  // recomputed from the stored solution (factor 1 before the planted commit, ACCURACY_FACTOR from it).
  const library = problemLibraryFor(db, root);
  let planted: { key: string; before: PlantedAccuracy; after: PlantedAccuracy } | null = null;
  let bestDistance = Infinity;
  for (const r of template) {
    if (r.c.caseKey === slowCase || !(r.c.stateError! > 0) || r.c.objective === null) continue;
    const loaded = loadFromLibrary(library, r.c.problemId);
    if (!loaded.ok) continue;
    const before = plantAccuracyLoss(r.c, loaded.problem, 1);
    const after = plantAccuracyLoss(r.c, loaded.problem, ACCURACY_FACTOR);
    if (!before || !after || !(before.stateError! > 0)) continue;
    const distance = Math.abs(Math.log(before.stateError! / ACCURACY_TARGET_STATE_ERROR));
    if (distance < bestDistance) {
      bestDistance = distance;
      planted = { key: r.c.caseKey, before, after };
    }
  }
  const accurateCase = planted?.key ?? null;

  const demoRunIds: string[] = [];
  let previous: CaseRows | null = null;
  let previousRunId: string | null = null;
  let found = 0;
  const day = 86_400_000;
  const start = real.startedAt.getTime() - (DEMO_COMMITS + 1) * day;
  for (let k = 0; k < DEMO_COMMITS; k++) {
    const rand = prng(1000 + k);
    const runId = crypto.randomUUID();
    const startedAt = new Date(start + k * day);
    const current: CaseRows = new Map();
    db.transaction((tx) => {
      tx.insert(runs)
        .values({
          id: runId,
          suiteId: real.suiteId,
          commitHash: demoHash(k),
          branch: DEMO_BRANCH,
          dirty: false,
          commitSubject: SUBJECTS[k] ?? `Demo: commit ${k + 1}`,
          commitAuthor: "Demo Engineer <engineer@arcwatch.test>",
          commitDate: startedAt,
          machineJson: { ...(real.machineJson as Record<string, unknown>), demo: true },
          machineKey: real.machineKey,
          startedAt,
          finishedAt: new Date(startedAt.getTime() + (real.finishedAt ? real.finishedAt.getTime() - real.startedAt.getTime() : 60_000)),
          status: "complete",
          calibrationSeconds: real.calibrationSeconds,
          isDemo: true,
        })
        .run();
      for (const { c, samples } of template) {
        let speed = 1;
        if (c.caseKey === slowCase && k >= SPEED_AT) speed = k >= IMPROVEMENT_AT ? 0.55 : 1.8;
        const acc = planted && c.caseKey === planted.key ? (k >= ACCURACY_AT ? planted.after : planted.before) : null;
        // ±3 % jitter per sample: below the quick suite's 20 % speed threshold.
        const s = (samples ?? []).map((v) => v * speed * (0.97 + 0.06 * rand()));
        const row: Omit<CaseResultRow, "id" | "createdAt"> = {
          ...c,
          runId,
          ...(acc ? { objective: acc.objective, objectiveErrorRel: acc.objectiveErrorRel, objectiveErrorAbs: acc.objectiveErrorAbs, stateError: acc.stateError, controlError: acc.controlError ?? c.controlError, trajectoryJson: acc.trajectory } : {}),
          medianSeconds: s.length ? median(s) : c.medianSeconds,
          meanSeconds: s.length ? s.reduce((a, b) => a + b, 0) / s.length : c.meanSeconds,
          minSeconds: s.length ? Math.min(...s) : c.minSeconds,
          message: c.message,
        };
        const { id: _id, createdAt: _c, ...insertable } = { ...row, id: 0, createdAt: null };
        const inserted = tx.insert(caseResults).values(insertable).returning({ id: caseResults.id }).get();
        if (s.length) tx.insert(timingSamples).values({ caseResultId: inserted.id, samplesJson: s }).run();
        current.set(c.caseKey, {
          id: inserted.id,
          caseKey: c.caseKey,
          problemId: c.problemId,
          status: c.status,
          iterations: c.iterations,
          objectiveErrorRel: row.objectiveErrorRel,
          finalTimeError: c.finalTimeError,
          stateError: row.stateError,
          controlError: row.controlError,
          medianSeconds: row.medianSeconds,
          arcsJson: c.arcsJson,
          samples: s,
        });
      }
      if (previous && previousRunId) {
        for (const f of compareCases(current, previous, thresholds)) {
          const reg = tx
            .insert(regressions)
            .values({ runId, baselineRunId: previousRunId, caseKey: f.caseKey, kind: f.kind, direction: f.direction, metric: f.metric, before: f.before, after: f.after, ratio: f.ratio !== null && Number.isFinite(f.ratio) ? f.ratio : null, pValue: f.pValue, ciLow: f.ciLow, ciHigh: f.ciHigh, status: f.direction === "improvement" ? "acknowledged" : "open" })
            .returning({ id: regressions.id })
            .get();
          tx.insert(regressionEvents).values({ regressionId: reg.id, userId: null, toStatus: f.direction === "improvement" ? "acknowledged" : "open", note: `Demo data: found between demo commits ${demoHash(k - 1).slice(0, 10)} and ${demoHash(k).slice(0, 10)}: ${f.detail}` }).run();
          found++;
        }
      }
    });
    previous = current;
    previousRunId = runId;
    demoRunIds.push(runId);
    log(`demo history ${k + 1}/${DEMO_COMMITS} on ${DEMO_BRANCH}`);
  }
  log(`done in ${((Date.now() - t0) / 1000).toFixed(1)} s: 1 real run, ${DEMO_COMMITS} demo runs, ${found} demo regressions/improvements (slowed case ${slowCase}, less accurate case ${accurateCase})`);
  return { realRunId: summary.runId, demoRunIds, regressions: found };
}

/** Real quick-suite results on this checkout plus a labelled demo history. */
export const demoResults: Seeder = {
  name: "demo results",
  async run(db, log) {
    if (!demoSeedWanted(db)) return;
    // progress for the overview (app/models/demo-progress.server.ts): cases done of the real run
    const progress: DemoProgress = { state: "running", done: 0, total: 0, pid: process.pid, startedAt: Date.now(), message: null };
    const save = (patch: Partial<DemoProgress>) => {
      Object.assign(progress, patch);
      try {
        writeDemoProgress(progress);
      } catch {
        /* progress is a courtesy; the seeding goes on */
      }
    };
    save({});
    const events = {
      write(line: string) {
        const e = parseRunEvent(line);
        if (e) save({ done: e.done, total: e.total });
      },
    };
    try {
      // stopped with the server (scripts/start.mjs sends SIGTERM): the run is marked interrupted
      const stop = new AbortController();
      for (const sig of ["SIGTERM", "SIGINT"] as const) process.once(sig, () => stop.abort());
      await seedDemoResults(db, { log, events, signal: stop.signal, suite: process.env.ARCWATCH_DEMO_SUITE?.trim() || undefined, onHistory: () => save({ state: "history" }) });
      save({ state: "done" });
    } catch (err) {
      // The app is usable without demo results; say why they are missing and go on.
      log(`skipped: ${(err as Error).message} (run \`npm run bench -- --suite quick\` to record results)`);
      save({ state: "failed", message: (err as Error).message.slice(0, 500) });
    }
  },
};
