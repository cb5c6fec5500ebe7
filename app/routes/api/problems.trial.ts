import type { Route } from "./+types/problems.trial";
import { readProblemSubmission, SCHEMES, trialSolve, type SchemeName } from "~/models/problems.server";
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
  const intervals = Number(form.get("trialIntervals") ?? 20);
  const trial = await trialSolve(sub.files, sub.id, scheme, Number.isFinite(intervals) ? intervals : 20);
  if ("error" in trial) return Response.json({ errors: { form: trial.error }, values: sub.values }, { status: 400 });
  return Response.json({ values: sub.values, trial, errors: {} });
}

/** GET /api/problems/trial: a trial is a POST (405 naming the method, never a server error). */
export async function loader() {
  return Response.json({ error: "POST a problem submission to try it (multipart or url-encoded form fields)." }, { status: 405, headers: { Allow: "POST" } });
}
