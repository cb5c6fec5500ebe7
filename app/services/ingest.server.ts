/**
 * The HTTP side of ingestion, shared by POST /api/runs (where `npm run bench -- --upload` posts)
 * and POST /api/ingest. Only an API token with the engineer role may post; a browser session is
 * refused, so that no page can be made to post runs on a signed-in user's behalf.
 * 201 created · 200 already stored (nothing changed) · 400 invalid · 401/403 token · 413 too large.
 */
import { getDb } from "~/db/client.server";
import { ingestRun, readLimited, MAX_INGEST_BYTES } from "~/models/runs.server";
import { requireRole } from "./auth.server";

export async function handleIngest(request: Request): Promise<Response> {
  if (request.method !== "POST") return Response.json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  if (!request.headers.get("authorization")) return Response.json({ error: "Send Authorization: Bearer <token>." }, { status: 401 });
  const user = await requireRole(request, "engineer");
  if (user.via !== "token") return Response.json({ error: "Ingestion takes an API token." }, { status: 401 });
  const text = await readLimited(request);
  if (text === null) return Response.json({ error: `The payload is larger than ${MAX_INGEST_BYTES} bytes.` }, { status: 413 });
  const out = ingestRun(getDb(), text);
  if (!out.ok) return Response.json({ error: out.error, issues: out.issues }, { status: out.status });
  return Response.json(out, { status: out.created ? 201 : 200 });
}
