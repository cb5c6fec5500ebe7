/**
 * The HTTP side of ingestion, shared by POST /api/runs (where `npm run bench -- --upload` posts)
 * and POST /api/ingest. Only an upload token or an API token with the engineer role may post
 * (runner-auth.server.ts); a browser session is refused, so that no page can be made to post
 * runs on a signed-in user's behalf. An upload token limited to one suite posts only that suite.
 * 201 created · 200 already stored (nothing changed) · 400 invalid · 401/403 token · 413 too large.
 */
import { getDb } from "~/db/client.server";
import { ingestRun, readLimited, MAX_INGEST_BYTES } from "~/models/runs.server";
import { requireUploader } from "./runner-auth.server";
import { jsonTooDeep } from "~/runs/json-depth";

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
  const out = ingestRun(getDb(), text, { tokenId: user.tokenId, suiteName: user.scope === "upload" ? user.suiteName : null });
  if (!out.ok) return Response.json({ error: out.error, issues: out.issues }, { status: out.status });
  return Response.json(out, { status: out.created ? 201 : 200 });
}
