import type { Route } from "./+types/runs.$id";
import { getDb } from "~/db/client.server";
import { getRun } from "~/models/runs.server";
import { confirmationOfRun } from "~/models/ab-checks.server";
import { requireRunReader } from "~/services/runner-auth.server";
import { csvResponse, jsonResponse, wantsCsv } from "~/services/export.server";

const COLUMNS = ["id", "caseKey", "problemId", "scheme", "intervals", "degree", "status", "solved", "objective", "objectiveErrorRel", "stateError", "controlError", "resimMiss", "constraintViolation", "iterations", "medianSeconds", "message"] as const;

/**
 * GET /api/runs/:id (viewer, token, or the upload token that uploaded it): the run, its cases, its
 * regressions and `confirmation` (the A/B check of its speed regressions, null when none was
 * queued; `bench --upload --confirm` polls it); format=csv gives the cases.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRunReader(request, params.id);
  const run = getRun(getDb(), params.id);
  if (!run) return Response.json({ error: `No run ${params.id}.` }, { status: 404 });
  if (wantsCsv(request)) return csvResponse(`arcwatch-run-${params.id}`, COLUMNS, run.cases);
  return jsonResponse(request, `arcwatch-run-${params.id}`, { ...run, confirmation: confirmationOfRun(getDb(), params.id) });
}
