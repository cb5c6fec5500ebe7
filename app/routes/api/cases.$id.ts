import type { Route } from "./+types/cases.$id";
import { getDb } from "~/db/client.server";
import { getCase, getCaseTrajectory } from "~/models/cases.server";
import { requireUser } from "~/services/auth.server";
import { csvResponse, jsonResponse, wantsCsv } from "~/services/export.server";
import { eventWords, eventsOfRow } from "~/engine/nlp/iteration-log";

/**
 * GET /api/cases/:id (viewer or token): one case with all numbers and its iteration log.
 * `?part=trajectory` gives the states, controls, costates and the reference (for the charts);
 * `?part=log&format=csv` gives the iteration log as CSV; `?part=trajectory&format=csv` the states.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const id = Number(params.id);
  if (!Number.isInteger(id) || id < 1) return Response.json({ error: "A case id is a positive integer." }, { status: 400 });
  const db = getDb();
  const part = new URL(request.url).searchParams.get("part");
  if (part === "trajectory") {
    const tr = await getCaseTrajectory(db, id);
    if (!tr) return Response.json({ error: `No case ${id}.` }, { status: 404 });
    if (wantsCsv(request)) {
      const s = tr.solution.states;
      const cols = ["t", ...Object.keys(s?.columns ?? {})];
      return csvResponse(`arcwatch-case-${id}-states`, cols, (s?.t ?? []).map((t, i) => Object.fromEntries([["t", t], ...Object.entries(s!.columns).map(([k, v]) => [k, v[i]])])));
    }
    return jsonResponse(request, `arcwatch-case-${id}-trajectory`, tr);
  }
  const c = getCase(db, id);
  if (!c) return Response.json({ error: `No case ${id}.` }, { status: 404 });
  if (wantsCsv(request)) {
    if (part === "log") {
      // Events in words, one cell ("step cut ×2; second-order correction"), also for older logs.
      const rows = c.log.map(({ info: _old, events: _ev, ...r }) => ({ ...r, events: eventWords({ lsTrials: Number(r.lsTrials) || 0, events: eventsOfRow({ events: _ev, info: _old }) }).join("; ") }));
      const cols = [...new Set(rows.flatMap((r) => Object.keys(r)))];
      return csvResponse(`arcwatch-case-${id}-log`, cols, rows);
    }
    return csvResponse(`arcwatch-case-${id}`, ["name", "value"], Object.entries(c.numbers).map(([name, value]) => ({ name, value })));
  }
  return jsonResponse(request, `arcwatch-case-${id}`, c);
}
