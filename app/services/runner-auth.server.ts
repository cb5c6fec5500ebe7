/**
 * Guards of the upload routes, the only routes an upload-scoped ("runner") token may call.
 *
 * - `requireUploader`: POST /api/runs and /api/ingest. Takes an API token only (a browser
 *   session is refused, so no page can be made to post runs on a signed-in user's behalf):
 *   an upload token, or a full token with at least the engineer role. An upload token's role
 *   is still capped by its creator's current role (tokens.server.ts), so a runner token made by
 *   an admin who is later made a viewer stops uploading.
 * - `requireRunReader`: GET /api/runs/:id. Anyone `requireUser` accepts, and an upload token
 *   for the runs it uploaded itself (a shard's run included); any other run is "not found" to
 *   it, so a runner token learns nothing about other runs.
 */
import { eq } from "drizzle-orm";
import { getDb } from "~/db/client.server";
import { runShards, runs } from "~/db/schema";
import { requireUser, type AuthUser } from "./auth.server";
import { ROLE_RANK } from "./roles";
import { authenticateToken, bearerToken, type TokenUser } from "./tokens.server";

function refuse(status: number, error: string): Response {
  return Response.json({ error }, { status });
}

/** The token an upload is made with; throws a 401/403 JSON response otherwise. */
export function requireUploader(request: Request): TokenUser {
  const token = bearerToken(request);
  if (token === null) throw refuse(401, "Send Authorization: Bearer <token> (an upload or engineer API token).");
  const user = authenticateToken(getDb(), token);
  if (!user) throw refuse(401, "Invalid or revoked API token.");
  if (ROLE_RANK[user.role] < ROLE_RANK.engineer) throw refuse(403, "Uploading runs needs an upload token or an engineer token.");
  return user;
}

/** Whether `tokenId` uploaded run `runId` (as a whole run or as one of its shards). */
export function uploadedBy(runId: string, tokenId: number): boolean {
  const db = getDb();
  const run = db.select({ t: runs.uploadedByTokenId }).from(runs).where(eq(runs.id, runId)).get();
  if (!run) return false;
  if (run.t === tokenId) return true;
  return db.select({ t: runShards.tokenId }).from(runShards).where(eq(runShards.runId, runId)).all().some((s) => s.t === tokenId);
}

/**
 * The reader of one run: a user or full token as `requireUser` decides, or an upload token
 * for its own uploads (any other run answers 404, as if it did not exist).
 */
export async function requireRunReader(request: Request, runId: string): Promise<AuthUser | TokenUser> {
  const token = bearerToken(request);
  if (token !== null) {
    const t = authenticateToken(getDb(), token);
    if (t?.scope === "upload") {
      if (!uploadedBy(runId, t.tokenId)) throw refuse(404, `Run ${runId} not found.`);
      return t;
    }
  }
  return requireUser(request);
}
