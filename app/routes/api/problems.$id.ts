import type { Route } from "./+types/problems.$id";
import { errorsByField, uploadFieldOf } from "~/components/problems/form-model";
import { getDb } from "~/db/client.server";
import { getProblemDetail, saveUploadedProblem, submissionForm } from "~/models/problems.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { busyResponse, readSubmissionOffThread, SolverPoolBusy } from "~/services/solver-pool.server";

/**
 * GET /api/problems/:id (viewer or token): TeX of every expression, constants, bounds, references with provenance, best result per scheme, versions.
 * The problem is compiled on a solver thread (kept by content): 422 when it does not compile (file, field, column), 503 with Retry-After when the solver queue is full.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  let r;
  try {
    r = await getProblemDetail(getDb(), params.id); // compiled on a solver thread
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyResponse(err);
    throw err;
  }
  if (!r.ok) return Response.json({ error: r.message }, { status: r.status });
  return Response.json(r.detail);
}

/**
 * PUT or POST /api/problems/:id (engineer): a new version of a problem added in Arcwatch, body as
 * for POST /api/problems (the id comes from the URL). 200 `{ id, versionHash, newVersion }`;
 * checked and compiled on a solver thread, 503 with Retry-After when its queue is full.
 */
export async function action({ request, params }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  if (request.method !== "PUT" && request.method !== "POST") return Response.json({ error: "Use PUT or POST." }, { status: 405 });
  const form = await submissionForm(request);
  if (form instanceof Response) return form;
  form.set("mode", "upload");
  let sub;
  try {
    sub = await readSubmissionOffThread(form, params.id);
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyResponse(err);
    throw err;
  }
  if (!sub.files) return Response.json({ errors: sub.errors }, { status: 400 });
  const saved = saveUploadedProblem(getDb(), params.id, sub.files, "edit", sub.plan);
  if (!saved.ok) return Response.json({ errors: { ...errorsByField(saved.errors, uploadFieldOf), ...(saved.idError ? { id: saved.idError } : {}) } }, { status: saved.idError ? 404 : 400 });
  return Response.json({ id: saved.id, versionHash: saved.versionHash, newVersion: saved.newVersion });
}
