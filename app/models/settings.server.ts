/**
 * Settings: regression thresholds per suite (engineer proposes, admin saves or rejects) and
 * e-mail subscriptions per user (a suite by name, or a problem).
 */
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import { z } from "zod";
import type { Db } from "~/db/client.server";
import { outbox, problems, subscriptions, suites, thresholdSettings, users } from "~/db/schema";
import { DEFAULT_THRESHOLDS } from "~/runs/suite";
import type { Thresholds } from "~/runs/types";

/** Editable threshold keys with their help line and valid range. */
export const THRESHOLD_FIELDS = {
  accuracyFactor: { help: "Accuracy: flag when an error grows by more than this factor", schema: z.coerce.number().min(1).max(1e6) },
  accuracyFloor: { help: "…and the new error is above this absolute floor", schema: z.coerce.number().min(0).max(1) },
  iterationShare: { help: "Robustness: flag when iterations grow by more than this share (0.25 = 25 %)", schema: z.coerce.number().min(0).max(100) },
  iterationMin: { help: "…and by at least this many iterations", schema: z.coerce.number().int().min(0).max(100000) },
  speedRatio: { help: "Speed: flag when the median time ratio exceeds this", schema: z.coerce.number().min(1).max(100) },
  alpha: { help: "…and the one-sided Mann–Whitney p is below this", schema: z.coerce.number().gt(0).lt(1) },
  confidence: { help: "Two-sided level of the bootstrap interval of the median ratio", schema: z.coerce.number().gt(0).lt(1) },
  driftMinShift: { help: "Drift: minimum |shift| of ln(time ratio) between the last two segments", schema: z.coerce.number().min(0).max(10) },
  driftMinHistory: { help: "Drift: minimum runs of history before change points are looked for", schema: z.coerce.number().int().min(2).max(10000) },
} as const;
export type ThresholdField = keyof typeof THRESHOLD_FIELDS;
export const THRESHOLD_KEYS = Object.keys(THRESHOLD_FIELDS) as ThresholdField[];

export const thresholdProposal = z.object({
  suiteName: z.string().trim().regex(/^[a-z0-9][a-z0-9_-]{0,63}$/, "Pick a suite."),
  note: z.string().trim().max(1000, "Keep the note under 1,000 characters.").optional(),
  accuracyFactor: THRESHOLD_FIELDS.accuracyFactor.schema,
  accuracyFloor: THRESHOLD_FIELDS.accuracyFloor.schema,
  iterationShare: THRESHOLD_FIELDS.iterationShare.schema,
  iterationMin: THRESHOLD_FIELDS.iterationMin.schema,
  speedRatio: THRESHOLD_FIELDS.speedRatio.schema,
  alpha: THRESHOLD_FIELDS.alpha.schema,
  confidence: THRESHOLD_FIELDS.confidence.schema,
  driftMinShift: THRESHOLD_FIELDS.driftMinShift.schema,
  driftMinHistory: THRESHOLD_FIELDS.driftMinHistory.schema,
});

/** The thresholds in force for a suite: defaults ← suite file ← the latest saved setting. */
export function effectiveThresholds(db: Db, suiteName: string, fromFile: Partial<Thresholds> = {}): Thresholds {
  const saved = db.select({ t: thresholdSettings.thresholdsJson }).from(thresholdSettings).where(and(eq(thresholdSettings.suiteName, suiteName), eq(thresholdSettings.status, "saved"))).orderBy(desc(thresholdSettings.decidedAt)).limit(1).get();
  return { ...DEFAULT_THRESHOLDS, ...fromFile, ...((saved?.t ?? {}) as Partial<Thresholds>) };
}

export interface SuiteThresholds {
  suiteName: string;
  current: Thresholds;
  fromFile: Partial<Thresholds>;
  saved: { id: number; decidedAt: number | null } | null;
  proposals: { id: number; thresholds: Record<string, number | boolean>; note: string | null; proposedBy: string | null; createdAt: number; status: string }[];
}

export function listSuiteThresholds(db: Db): SuiteThresholds[] {
  const latest = new Map<string, Partial<Thresholds>>();
  for (const s of db.select({ name: suites.name, t: suites.thresholdsJson }).from(suites).orderBy(asc(suites.createdAt)).all()) latest.set(s.name, (s.t ?? {}) as Partial<Thresholds>);
  const rows = db
    .select({ id: thresholdSettings.id, suiteName: thresholdSettings.suiteName, t: thresholdSettings.thresholdsJson, status: thresholdSettings.status, note: thresholdSettings.note, createdAt: thresholdSettings.createdAt, decidedAt: thresholdSettings.decidedAt, proposedBy: users.name })
    .from(thresholdSettings)
    .leftJoin(users, eq(users.id, thresholdSettings.proposedById))
    .where(inArray(thresholdSettings.status, ["proposed", "saved"]))
    .orderBy(desc(thresholdSettings.createdAt))
    .all();
  return [...latest.entries()].map(([name, fromFile]) => {
    const saved = rows.find((r) => r.suiteName === name && r.status === "saved") ?? null;
    return {
      suiteName: name,
      fromFile,
      current: effectiveThresholds(db, name, fromFile),
      saved: saved ? { id: saved.id, decidedAt: saved.decidedAt?.getTime() ?? null } : null,
      proposals: rows.filter((r) => r.suiteName === name && r.status === "proposed").map((r) => ({ id: r.id, thresholds: r.t, note: r.note, proposedBy: r.proposedBy, createdAt: r.createdAt.getTime(), status: r.status })),
    };
  });
}

export function proposeThresholds(db: Db, input: { suiteName: string; note?: string } & Record<ThresholdField, number>, userId: number | null): number {
  const t = Object.fromEntries(THRESHOLD_KEYS.map((k) => [k, input[k]]));
  return db.insert(thresholdSettings).values({ suiteName: input.suiteName, thresholdsJson: t, note: input.note || null, proposedById: userId }).returning({ id: thresholdSettings.id }).get().id;
}

/** Admin decision on a proposal; saving supersedes the suite's previous saved set. */
export function decideThresholds(db: Db, id: number, decision: "saved" | "rejected", adminId: number): { ok: boolean; error?: string } {
  return db.transaction((tx) => {
    const row = tx.select().from(thresholdSettings).where(eq(thresholdSettings.id, id)).get();
    if (!row) return { ok: false, error: `No proposal ${id}.` };
    if (row.status !== "proposed") return { ok: false, error: `Proposal ${id} is already ${row.status}.` };
    if (decision === "saved") {
      tx.update(thresholdSettings).set({ status: "superseded" }).where(and(eq(thresholdSettings.suiteName, row.suiteName), eq(thresholdSettings.status, "saved"))).run();
    }
    tx.update(thresholdSettings).set({ status: decision, decidedById: adminId, decidedAt: new Date() }).where(eq(thresholdSettings.id, id)).run();
    return { ok: true };
  });
}

// ---------------------------------------------------------------------------------------
// Subscriptions
// ---------------------------------------------------------------------------------------

export const subscriptionInput = z.union([
  z.object({ target: z.literal("suite"), suiteName: z.string().trim().regex(/^[a-z0-9][a-z0-9_-]{0,63}$/, "Pick a suite.") }),
  z.object({ target: z.literal("problem"), problemId: z.string().trim().min(1, "Pick a problem.").max(200) }),
]);

export function listSubscriptions(db: Db, userId: number) {
  return db.select({ id: subscriptions.id, suiteName: subscriptions.suiteName, problemId: subscriptions.problemId, createdAt: subscriptions.createdAt }).from(subscriptions).where(eq(subscriptions.userId, userId)).orderBy(asc(subscriptions.id)).all();
}

export function subscribe(db: Db, userId: number, input: z.infer<typeof subscriptionInput>): { ok: boolean; error?: string } {
  if (input.target === "problem" && !db.select({ id: problems.id }).from(problems).where(eq(problems.id, input.problemId)).get()) return { ok: false, error: `No problem ${input.problemId}.` };
  db.insert(subscriptions)
    .values(input.target === "suite" ? { userId, suiteName: input.suiteName } : { userId, problemId: input.problemId })
    .onConflictDoNothing()
    .run();
  return { ok: true };
}

export function unsubscribe(db: Db, userId: number, id: number): void {
  db.delete(subscriptions).where(and(eq(subscriptions.id, id), eq(subscriptions.userId, userId))).run();
}

export function subscriptionChoices(db: Db): { suites: string[]; problems: { id: string; title: string }[] } {
  return {
    suites: db.selectDistinct({ n: suites.name }).from(suites).orderBy(asc(suites.name)).all().map((r) => r.n),
    problems: db.select({ id: problems.id, title: problems.title }).from(problems).orderBy(asc(problems.id)).all(),
  };
}

// ---------------------------------------------------------------------------------------
// Outbox
// ---------------------------------------------------------------------------------------

export function listOutbox(db: Db, page: number, pageSize = 50) {
  const rows = db.select().from(outbox).orderBy(desc(outbox.createdAt), desc(outbox.id)).limit(pageSize).offset((page - 1) * pageSize).all();
  const total = db.select({ n: sql<number>`count(*)` }).from(outbox).get()?.n ?? 0;
  return { rows: rows.map((r) => ({ ...r, createdAt: r.createdAt.getTime(), sentAt: r.sentAt?.getTime() ?? null })), total, page, pages: Math.max(1, Math.ceil(total / pageSize)) };
}
