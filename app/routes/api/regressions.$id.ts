import { z } from "zod";
import type { Route } from "./+types/regressions.$id";
import { getDb } from "~/db/client.server";
import { repoRoot, resolveRef } from "~/services/git.server";
import { addRegressionComment, commentSchema, commitsBetween, getRegressionDetail, problemOfRegression, setProblemSubscription, triageRegression, triageSchema } from "~/models/regressions.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { fieldErrors } from "~/services/forms.server";
import { affectedCases, commitsOfRegression } from "~/models/ab-checks.server";
import { checkAbJob, queueAbJob } from "~/services/ab-confirm.server";

/** GET /api/regressions/:id (viewer or token): evidence, both cases (samples, trajectories), events, comments, commits between. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const id = Number(params.id);
  const db = getDb();
  const detail = Number.isInteger(id) ? await getRegressionDetail(db, id, user.id) : null;
  if (!detail) return Response.json({ error: "No such regression." }, { status: 404 });
  const between = await commitsBetween(detail.before?.commitHash ?? null, detail.regression.commitHash);
  return Response.json({ ...detail, commits: between.commits, commitsNote: between.note });
}

async function body(request: Request): Promise<Record<string, string>> {
  if ((request.headers.get("content-type") ?? "").includes("application/json")) {
    const j = (await request.json().catch(() => ({}))) as Record<string, unknown>;
    return Object.fromEntries(Object.entries(j ?? {}).map(([k, v]) => [k, String(v)]));
  }
  const f = await request.formData();
  return Object.fromEntries([...f.entries()].filter(([, v]) => typeof v === "string") as [string, string][]);
}

/**
 * POST /api/regressions/:id, form or JSON with `intent`:
 * - engineer: acknowledge [note], assign assigneeId (0 = nobody), expected reason, fixed fixingCommit, reopen [note];
 *   ab (confirm by interleaved A/B: baseline commit against flagged commit, the affected cases only; 201 `{ ok, job }`);
 * - any signed-in user: comment body, subscribe, unsubscribe (e-mail about this problem).
 * 200 `{ ok: true, ... }`; 400 `{ errors }` by field; 403 for a viewer's triage.
 */
export async function action({ request, params }: Route.ActionArgs) {
  const id = Number(params.id);
  const db = getDb();
  const b = await body(request);
  const intent = b.intent ?? "";
  if (!Number.isInteger(id)) return Response.json({ error: "No such regression." }, { status: 404 });
  if (["acknowledge", "assign", "expected", "fixed", "reopen"].includes(intent)) {
    const user = await requireRole(request, "engineer");
    const parsed = triageSchema.safeParse(b);
    if (!parsed.success) return Response.json({ intent, errors: fieldErrors(parsed.error) }, { status: 400 });
    let input = parsed.data;
    if (input.intent === "fixed") {
      // a fix names a commit of the repository the runs come from, not any hex string
      const commit = await resolveRef(input.fixingCommit);
      if (!commit) return Response.json({ intent, errors: { fixingCommit: `No commit ${input.fixingCommit} in the repository (${repoRoot()}).` } }, { status: 400 });
      input = { ...input, fixingCommit: commit };
    }
    const r = triageRegression(db, id, user.id, input, user.tokenId ?? null);
    if (!r.ok) return Response.json({ intent, errors: r.errors }, { status: r.status });
    return Response.json({ ok: true, intent, status: r.status });
  }
  if (intent === "ab") {
    const user = await requireRole(request, "engineer");
    const at = commitsOfRegression(db, id);
    if (!at) return Response.json({ error: "No such regression." }, { status: 404 });
    if (!at.base) return Response.json({ intent, errors: { form: "This regression has no baseline run (it was removed), so there is no earlier commit to compare with." } }, { status: 400 });
    const checked = await checkAbJob(db, { base: at.base, head: at.head, suite: at.suiteName, cases: affectedCases(db, [id]) }, undefined, { allowSameCommit: true });
    if (!checked.ok) return Response.json({ intent, errors: { form: checked.message } }, { status: 400 });
    const { job } = queueAbJob(db, checked.payload, user.id > 0 ? user.id : null, { regressionIds: [id] });
    return Response.json({ ok: true, intent, job }, { status: 201 });
  }
  const user = await requireUser(request);
  if (intent === "comment") {
    const parsed = commentSchema.safeParse(b);
    if (!parsed.success) return Response.json({ intent, errors: fieldErrors(parsed.error) }, { status: 400 });
    if (!addRegressionComment(db, id, user.id, parsed.data.body, user.tokenId ?? null)) return Response.json({ error: "No such regression." }, { status: 404 });
    return Response.json({ ok: true, intent });
  }
  if (intent === "subscribe" || intent === "unsubscribe") {
    const problemId = problemOfRegression(db, id);
    if (!problemId) return Response.json({ error: "No such regression." }, { status: 404 });
    const ok = setProblemSubscription(db, user.id, problemId, intent === "subscribe");
    if (!ok) return Response.json({ intent, errors: { form: "That problem is not in the library." } }, { status: 400 });
    return Response.json({ ok: true, intent, problemId });
  }
  return Response.json({ error: `Unknown intent '${z.string().max(40).catch("").parse(intent)}'.` }, { status: 400 });
}
