import type { Route } from "./+types/problems.trial";
import { TRIAL_MAX_INTERVALS, TRIAL_MIN_INTERVALS } from "~/models/problems.server";
import { requireRole } from "~/services/auth.server";
import { busyResponse, SolverPoolBusy, trialOffThread } from "~/services/solver-pool.server";

/**
 * POST /api/problems/trial (engineer): validates a problem submission (the add/edit form's
 * fields, multipart or url-encoded: mode, id, problemFile|problemJson, referenceFile|referenceCsv
 * or the builder fields; trialScheme, trialIntervals) and, when it compiles, solves it once on a
 * modest mesh, on a solver thread (app/services/solver-pool.server.ts) with a hard time limit.
 * 400 `{ errors, values }` with errors by field; 200 `{ values, trial }`; 503 with Retry-After
 * when the solver threads' queue is full.
 */
export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  const form = await request.formData();
  const intervalsRaw = String(form.get("trialIntervals") ?? "20").trim() || "20";
  const intervals = Number(intervalsRaw);
  // out of range is said at the field, never silently clamped to another mesh
  if (!Number.isInteger(intervals) || intervals < TRIAL_MIN_INTERVALS || intervals > TRIAL_MAX_INTERVALS) {
    const why = Number.isInteger(intervals) && intervals > TRIAL_MAX_INTERVALS ? `A trial solve takes at most ${TRIAL_MAX_INTERVALS} intervals (you asked for ${intervals}); suites run finer meshes.` : `Give a whole number of intervals from ${TRIAL_MIN_INTERVALS} to ${TRIAL_MAX_INTERVALS} (got "${intervalsRaw.slice(0, 20)}").`;
    const values = Object.fromEntries([...form.entries()].filter((e): e is [string, string] => typeof e[1] === "string"));
    return Response.json({ errors: { trialIntervals: why }, values }, { status: 400 });
  }
  try {
    const out = await trialOffThread(form, String(form.get("trialScheme") ?? "hermite-simpson"), intervals);
    if (!out.sub.files && !out.error) return Response.json({ errors: out.sub.errors, values: out.sub.values }, { status: 400 });
    if (out.error || !out.trial) return Response.json({ errors: { form: out.error ?? "The trial solve failed." }, values: out.sub.values }, { status: 400 });
    return Response.json({ values: out.sub.values, trial: out.trial, errors: {} });
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyResponse(err);
    throw err;
  }
}

/** GET /api/problems/trial: a trial is a POST (405 naming the method, never a server error). */
export async function loader() {
  return Response.json({ error: "POST a problem submission to try it (multipart or url-encoded form fields)." }, { status: 405, headers: { Allow: "POST" } });
}
