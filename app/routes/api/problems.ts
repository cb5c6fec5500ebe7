import type { Route } from "./+types/problems";
import { errorsByField, uploadFieldOf } from "~/components/problems/form-model";
import { getDb } from "~/db/client.server";
import { listProblemLibrary, saveUploadedProblem, submissionForm } from "~/models/problems.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { busyResponse, readSubmissionOffThread, SolverPoolBusy } from "~/services/solver-pool.server";

/** GET /api/problems[?tag=&q=] (viewer or token): the library with tags, provenance and each scheme's state on main (problems compiled on a solver thread; 503 with Retry-After when its queue is full). */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const url = new URL(request.url);
  try {
    // each problem compiled on a solver thread, kept by content (app/services/problem-views.server.ts)
    return Response.json({ problems: await listProblemLibrary(getDb(), { tag: url.searchParams.get("tag") ?? undefined, q: url.searchParams.get("q") ?? undefined }) });
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyResponse(err);
    throw err;
  }
}

/**
 * POST /api/problems (engineer): adds a problem. JSON `{ id, problemJson | problem, referenceCsv? }`
 * or the add form's multipart fields. 201 `{ id, versionHash }`; 400 `{ errors }` by field
 * (problemJson / referenceCsv / id), each with JSON path and column. Checked and compiled on a
 * solver thread (app/services/solver-pool.server.ts): 503 with Retry-After when its queue is full.
 */
export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  const form = await submissionForm(request);
  if (form instanceof Response) return form;
  let sub;
  try {
    sub = await readSubmissionOffThread(form);
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyResponse(err);
    throw err;
  }
  if (!sub.files) return Response.json({ errors: sub.errors }, { status: 400 });
  const saved = saveUploadedProblem(getDb(), sub.id, sub.files, "create", sub.plan);
  if (!saved.ok) return Response.json({ errors: { ...errorsByField(saved.errors, uploadFieldOf), ...(saved.idError ? { id: saved.idError } : {}) } }, { status: saved.idError?.includes("already exists") ? 409 : 400 });
  return Response.json({ id: saved.id, versionHash: saved.versionHash }, { status: 201 });
}
