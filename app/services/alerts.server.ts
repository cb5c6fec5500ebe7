/**
 * E-mail alerts for new regressions: every active user subscribed to a regressed problem or to
 * the suite gets one message listing what regressed, by how much, on which commit, with links.
 */
import { and, eq, inArray, isNull, or } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { subscriptions, users } from "~/db/schema";
import type { Finding } from "~/runs/rules";
import type { CommitMeta } from "~/runs/types";
import { sendMail } from "./mail.server";

export interface AlertInput {
  runId: string;
  suiteName: string;
  commit: CommitMeta;
  regressions: { id: number; finding: Finding }[];
  baseUrl?: string;
  /** Said under the first line: whether an interleaved A/B confirmed them (app/services/ab-confirm.server.ts). */
  note?: string;
}

export interface AlertResult {
  sent: { to: string; subject: string; count: number }[];
  errors: string[];
}

const shortHash = (h: string) => h.slice(0, 10);

/** Subject line: count, suite, commit and the first finding. */
export function alertSubject(suiteName: string, commit: CommitMeta, items: { finding: Finding }[]): string {
  const first = items[0].finding;
  const more = items.length > 1 ? ` (+${items.length - 1} more)` : "";
  const by = first.ratio !== null && Number.isFinite(first.ratio) ? ` ×${first.ratio.toFixed(2)}` : "";
  return `[Arcwatch] ${items.length} regression${items.length > 1 ? "s" : ""} in suite ${suiteName} at ${shortHash(commit.commitHash)}: ${first.kind} ${first.caseKey}${by}${more}`;
}

export function alertBody(input: AlertInput, items: { id: number; finding: Finding }[]): string {
  const base = (input.baseUrl ?? process.env.ARCWATCH_BASE_URL ?? "http://127.0.0.1:3000").replace(/\/$/, "");
  const c = input.commit;
  const lines = [
    `Suite ${input.suiteName} found ${items.length} new regression${items.length > 1 ? "s" : ""}.`,
    ...(input.note ? [input.note] : []),
    "",
    `Commit:  ${c.commitHash}${c.dirty ? " (with uncommitted changes)" : ""}`,
    `Subject: ${c.subject ?? "—"}`,
    `Author:  ${c.author ?? "—"}`,
    `Branch:  ${c.branch ?? "—"}`,
    `Run:     ${base}/runs/${input.runId}`,
    "",
  ];
  for (const { id, finding: f } of items) {
    if (f.members?.length) {
      lines.push(`- ${f.kind}, ${f.detail}`);
      lines.push(`  cases: ${f.members.map((m) => `${m.caseKey}${m.ratio !== null ? ` ×${m.ratio.toFixed(2)}` : ""}`).join(", ")}`);
    } else lines.push(`- ${f.kind} on ${f.caseKey}: ${f.detail}`);
    lines.push(`  ${base}/regressions/${id}`);
  }
  lines.push("", "You receive this because you subscribed to the problem or the suite in Arcwatch.");
  return lines.join("\n");
}

export async function sendRegressionAlerts(db: Db, input: AlertInput): Promise<AlertResult> {
  const result: AlertResult = { sent: [], errors: [] };
  if (input.regressions.length === 0) return result;
  // A group finding concerns every problem of its member cases.
  const problemsOf = (f: Finding) => (f.members?.length ? f.members.map((m) => m.problemId) : [f.problemId]);
  const problemIds = [...new Set(input.regressions.flatMap((r) => problemsOf(r.finding)))];
  const subs = db
    .select({ email: users.email, problemId: subscriptions.problemId, suiteName: subscriptions.suiteName })
    .from(subscriptions)
    .innerJoin(users, eq(users.id, subscriptions.userId))
    .where(and(isNull(users.disabledAt), or(inArray(subscriptions.problemId, problemIds), eq(subscriptions.suiteName, input.suiteName))))
    .all();
  const perUser = new Map<string, { id: number; finding: Finding }[]>();
  for (const s of subs) {
    const mine = s.suiteName === input.suiteName ? input.regressions : input.regressions.filter((r) => s.problemId !== null && problemsOf(r.finding).includes(s.problemId));
    const list = perUser.get(s.email) ?? [];
    for (const r of mine) if (!list.includes(r)) list.push(r);
    perUser.set(s.email, list);
  }
  for (const [to, items] of perUser) {
    if (items.length === 0) continue;
    // Groups first (a scheme, a problem, the suite), then single cases, each in the order found.
    items.sort((a, b) => Number(!a.finding.members?.length) - Number(!b.finding.members?.length) || a.id - b.id);
    const subject = alertSubject(input.suiteName, input.commit, items);
    try {
      await sendMail(db, { to, subject, text: alertBody(input, items) });
      result.sent.push({ to, subject, count: items.length });
    } catch (err) {
      result.errors.push(`${to}: ${(err as Error).message}`);
    }
  }
  return result;
}
