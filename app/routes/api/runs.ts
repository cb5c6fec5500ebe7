import type { Route } from "./+types/runs";
import { getDb } from "~/db/client.server";
import { listRuns, parseRunListQuery } from "~/models/runs.server";
import { requireUser } from "~/services/auth.server";
import { csvResponse, jsonResponse, wantsCsv } from "~/services/export.server";
import { handleIngest } from "~/services/ingest.server";

const COLUMNS = ["id", "commitHash", "commitSubject", "branch", "suite", "machine", "machineKey", "status", "startedAt", "durationSeconds", "cases", "solved", "failed", "regressions", "improvements", "isDemo", "jobId"] as const;

/**
 * GET /api/runs (viewer or token): runs, sorted/filtered/paged on the server.
 * Query: sort, dir, page, pageSize (≤ 500), branch, suite, status, q, demo; format=csv|json.
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const q = parseRunListQuery(new URL(request.url).searchParams);
  const result = listRuns(getDb(), q);
  if (wantsCsv(request)) return csvResponse("arcwatch-runs", COLUMNS, result.rows.map((r) => ({ ...r, startedAt: new Date(r.startedAt).toISOString() })));
  return jsonResponse(request, "arcwatch-runs", { ...result, query: q });
}

/** POST /api/runs (engineer API token): ingest one arcwatch-run/1 payload (see app/services/ingest.server.ts). */
export async function action({ request }: Route.ActionArgs) {
  return handleIngest(request);
}
