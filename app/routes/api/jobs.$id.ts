import type { Route } from "./+types/jobs.$id";
import { getDb } from "~/db/client.server";
import { cancelJob, jobView } from "~/models/jobs.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { afterAbJob } from "~/services/ab-confirm.server";

/** GET /api/jobs/:id (viewer or token): status, progress, the run it produced and the log tail. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const id = Number(params.id);
  if (!Number.isInteger(id) || id < 1) return Response.json({ error: "A job id is a positive integer." }, { status: 400 });
  const job = jobView(getDb(), id);
  if (!job) return Response.json({ error: `No job ${id}.` }, { status: 404 });
  return Response.json({ job });
}

/** POST /api/jobs/:id with `intent=cancel` (form) or `{ "intent": "cancel" }` (JSON), engineer: cancel. */
export async function action({ request, params }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  if (request.method !== "POST") return Response.json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  const id = Number(params.id);
  if (!Number.isInteger(id) || id < 1) return Response.json({ error: "A job id is a positive integer." }, { status: 400 });
  let intent: unknown;
  if ((request.headers.get("content-type") ?? "").includes("json")) intent = ((await request.json().catch(() => ({}))) as { intent?: unknown }).intent;
  else intent = (await request.formData()).get("intent");
  if (intent !== "cancel") return Response.json({ error: 'The only intent is "cancel".' }, { status: 400 });
  const before = jobView(getDb(), id);
  const out = cancelJob(getDb(), id);
  if (!out.ok) return Response.json({ error: out.error }, { status: out.status });
  // A queued A/B never reaches the worker: settle its check now (a running one is settled by the worker).
  if (before?.kind === "ab" && before.status === "queued") await afterAbJob(getDb(), id, { error: "the job was cancelled before it ran" });
  return Response.json({ job: jobView(getDb(), id) });
}
