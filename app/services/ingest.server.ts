/**
 * The HTTP side of ingestion, shared by POST /api/runs (where `npm run bench -- --upload` posts)
 * and POST /api/ingest. Only an upload token or an API token with the engineer role may post
 * (runner-auth.server.ts); a browser session is refused, so that no page can be made to post
 * runs on a signed-in user's behalf. An upload token limited to one suite posts only that suite.
 * 201 created · 200 already stored (nothing changed) · 400 invalid · 401/403 token · 413 too large.
 *
 * After the check, the same step as after a command-line run (`alertOrConfirm`): new speed
 * regressions get one queued "ab" job (its id is in the answer as `abJobId`, so that `bench
 * --upload --confirm` can wait for its verdict) and their e-mail waits for it; the others are
 * e-mailed at once. A failure of that step is reported in the answer; the run stays stored.
 */
import { getDb } from "~/db/client.server";
import { ingestRun, readLimited, MAX_INGEST_BYTES } from "~/models/runs.server";
import { requireUploader } from "./runner-auth.server";
import { jsonTooDeep } from "~/runs/json-depth";
import { alertOrConfirm, commitMetaOfRun } from "./ab-confirm.server";

/** Deepest nesting an upload may have (a run payload's deepest part, an arc list or log entry, is under 10). */
export const MAX_UPLOAD_DEPTH = 64;

export async function handleIngest(request: Request): Promise<Response> {
  if (request.method !== "POST") return Response.json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  const user = requireUploader(request);
  const type = (request.headers.get("content-type") ?? "").split(";")[0]!.trim().toLowerCase();
  if (type !== "application/json") {
    return Response.json({ error: `Send the run as JSON with Content-Type: application/json (got ${type ? `"${type}"` : "no Content-Type"}).` }, { status: 415 });
  }
  const text = await readLimited(request);
  if (text === null) return Response.json({ error: `The payload is larger than ${MAX_INGEST_BYTES} bytes.` }, { status: 413 });
  const deep = jsonTooDeep(text, MAX_UPLOAD_DEPTH);
  if (deep) return Response.json({ error: `The payload nests deeper than ${MAX_UPLOAD_DEPTH} levels (at character ${deep.position}).` }, { status: 400 });
  const db = getDb();
  const out = ingestRun(db, text, { tokenId: user.tokenId, suiteName: user.scope === "upload" ? user.suiteName : null });
  if (!out.ok) return Response.json({ error: out.error, issues: out.issues }, { status: out.status });
  const { detection, suiteName, ...answer } = out;
  let after: { abJobId: number | null; alerted: number; unconfirmed: string | null; alertError?: string } = { abJobId: null, alerted: 0, unconfirmed: null };
  // Recipients are not echoed to the uploader: a failed e-mail is counted, its details go to the outbox.
  const commit = detection && detection.newRegressions > 0 && suiteName ? commitMetaOfRun(db, out.runId) : null;
  if (detection && commit && suiteName) {
    try {
      const baseUrl = process.env.ARCWATCH_BASE_URL ?? new URL(request.url).origin;
      const r = await alertOrConfirm(db, { runId: out.runId, suiteName, commit, detection, baseUrl });
      after = { abJobId: r.abJobId, alerted: r.sent.length, unconfirmed: r.unconfirmed, ...(r.errors.length ? { alertError: `${r.errors.length} e-mail(s) could not be sent` } : {}) };
    } catch (err) {
      after.alertError = (err as Error).message;
    }
  }
  return Response.json({ ...answer, ...after }, { status: out.created ? 201 : 200 });
}
