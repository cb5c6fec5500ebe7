import { z } from "zod";
import type { Route } from "./+types/history";
import { getDb } from "~/db/client.server";
import { historyQuery, historySeries } from "~/models/history.server";
import { requireUser } from "~/services/auth.server";
import { csvResponse, jsonResponse, wantsCsv } from "~/services/export.server";

/** GET /api/history?caseKey=&metric=&branch=&suite=&limit= (viewer or token): one metric of one case along a branch. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const params = Object.fromEntries(new URL(request.url).searchParams);
  const parsed = historyQuery.safeParse(params);
  if (!parsed.success) return Response.json({ error: "Invalid history query.", fields: z.flattenError(parsed.error).fieldErrors }, { status: 400 });
  const series = historySeries(getDb(), parsed.data);
  const name = `arcwatch-history-${parsed.data.caseKey}-${parsed.data.metric}`;
  if (wantsCsv(request)) {
    return csvResponse(name, ["runId", "caseId", "commitHash", "commitSubject", "startedAt", "status", "value", "mark", "isDemo"], series.points.map((p) => ({ ...p, startedAt: new Date(p.startedAt).toISOString() })));
  }
  return jsonResponse(request, name, { query: parsed.data, ...series });
}
