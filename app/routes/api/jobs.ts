import type { Route } from "./+types/jobs";
import { getDb } from "~/db/client.server";
import { enqueueJob, enqueueJobInput, listJobs } from "~/models/jobs.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { checkBenchJob } from "~/services/job-check.server";
import { checkAbJob, queueAbJob } from "~/services/ab-confirm.server";
import { csvResponse, wantsCsv } from "~/services/export.server";

/** GET /api/jobs (viewer): the latest 50 jobs, newest first; `format=csv` for a CSV file. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const list = listJobs(getDb());
  if (wantsCsv(request)) {
    return csvResponse("arcwatch-jobs", ["id", "kind", "status", "suite", "ref", "commit", "createdAt", "startedAt", "finishedAt", "error"], list.map((j) => {
      const p = (j.payloadJson ?? {}) as { suite?: string; ref?: string; commit?: string };
      return { ...j, suite: p.suite, ref: p.ref, commit: p.commit, createdAt: j.createdAt.toISOString(), startedAt: j.startedAt?.toISOString(), finishedAt: j.finishedAt?.toISOString() };
    }));
  }
  return Response.json({ jobs: list });
}

/** 400 `{ error, fields: { "<dotted path>": [messages] }, issues: [{ path, message }] }`. */
function invalidJob(issues: { path: string; message: string }[]): Response {
  const fields: Record<string, string[]> = {};
  for (const i of issues) (fields[i.path] ??= []).push(i.message);
  return Response.json({ error: "Invalid job.", fields, issues }, { status: 400 });
}

/**
 * POST /api/jobs (engineer): queue a job. Body JSON `{ "kind": "bench", "payload": { "suite": "quick" } }`,
 * optionally `commit` (7–40 hex digits) or `ref` (a branch); neither means the repository's HEAD.
 * 201 with the job (its payload names the resolved commit); 400 with `{ error, fields, issues }`
 * for a malformed body, a commit not in the repository or a suite the commit does not have.
 * `{ "kind": "ab", "payload": { "base", "head", "suite", "cases"?, "blocks"? } }` queues an interleaved
 * A/B of two commits (all of the suite's cases by default); the same field errors apply.
 */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "engineer");
  if (request.method !== "POST") return Response.json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return Response.json({ error: "The body must be JSON." }, { status: 400 });
  }
  const parsed = enqueueJobInput.safeParse(body);
  if (!parsed.success) {
    return invalidJob(parsed.error.issues.map((i) => ({ path: i.path.join(".") || "(body)", message: i.message })));
  }
  if (parsed.data.kind === "ab") {
    const ab = await checkAbJob(getDb(), parsed.data.payload);
    if (!ab.ok) return invalidJob([{ path: `payload.${ab.field}`, message: ab.message }]);
    const { job } = queueAbJob(getDb(), ab.payload, user.id > 0 ? user.id : null);
    return Response.json({ job }, { status: 201 });
  }
  const checked = await checkBenchJob(parsed.data.payload);
  if (!checked.ok) {
    return invalidJob([{ path: `payload.${checked.field}`, message: checked.message }]);
  }
  const job = enqueueJob(getDb(), { kind: "bench", payload: checked.payload }, user.id > 0 ? user.id : null);
  return Response.json({ job }, { status: 201 });
}
