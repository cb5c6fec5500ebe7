import type { Route } from "./+types/problems.trial";
import { readProblemSubmission, SCHEMES, TRIAL_MAX_INTERVALS, TRIAL_MIN_INTERVALS, trialSolve, type SchemeName } from "~/models/problems.server";
import { requireRole } from "~/services/auth.server";

/**
 * POST /api/problems/trial (engineer): validates a problem submission (the add/edit form's
 * fields, multipart or url-encoded: mode, id, problemFile|problemJson, referenceFile|referenceCsv
 * or the builder fields; trialScheme, trialIntervals) and, when it compiles, solves it once on a
 * modest mesh. 400 `{ errors, values }` with errors by field; 200 `{ values, trial }`.
 */
export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  const form = await request.formData();
  const sub = await readProblemSubmission(form);
  if (!sub.files) return Response.json({ errors: sub.errors, values: sub.values }, { status: 400 });
  const schemeRaw = String(form.get("trialScheme") ?? "hermite-simpson");
  const scheme = (SCHEMES as readonly string[]).includes(schemeRaw) ? (schemeRaw as SchemeName) : "hermite-simpson";
  const intervalsRaw = String(form.get("trialIntervals") ?? "20").trim() || "20";
  const intervals = Number(intervalsRaw);
  // out of range is said at the field, never silently clamped to another mesh
  if (!Number.isInteger(intervals) || intervals < TRIAL_MIN_INTERVALS || intervals > TRIAL_MAX_INTERVALS) {
    const why = Number.isInteger(intervals) && intervals > TRIAL_MAX_INTERVALS ? `A trial solve takes at most ${TRIAL_MAX_INTERVALS} intervals (you asked for ${intervals}); suites run finer meshes.` : `Give a whole number of intervals from ${TRIAL_MIN_INTERVALS} to ${TRIAL_MAX_INTERVALS} (got "${intervalsRaw.slice(0, 20)}").`;
    return Response.json({ errors: { ...sub.errors, trialIntervals: why }, values: sub.values }, { status: 400 });
  }
  const trial = await trialSolve(sub.files, sub.id, scheme, intervals);
  if ("error" in trial) return Response.json({ errors: { form: trial.error }, values: sub.values }, { status: 400 });
  return Response.json({ values: sub.values, trial, errors: {} });
}
