import { data, Link, redirect } from "react-router";
import type { Route } from "./+types/problems.$id.edit";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { ProblemEditor } from "~/components/problems/ProblemEditor";
import { errorsByField, uploadFieldOf } from "~/components/problems/form-model";
import { getDb } from "~/db/client.server";
import { editValues, saveUploadedProblem } from "~/models/problems.server";
import { requireRole } from "~/services/auth.server";
import { busyFormResponse, readSubmissionOffThread, SolverPoolBusy } from "~/services/solver-pool.server";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Edit ${params.id} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "engineer");
  const values = editValues(params.id);
  if (!values) throw data({ message: "Only problems added in Arcwatch can be edited here; library problems are edited in git." }, { status: 404 });
  return { values };
}

/** A refusal's Retry-After (solver threads busy) reaches the browser on a document request too. */
export const headers: Route.HeadersFunction = ({ actionHeaders }) => {
  const retry = actionHeaders.get("Retry-After");
  return retry ? { "Retry-After": retry } : new Headers();
};

export async function action({ request, params }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  const form = await request.formData();
  form.set("mode", "upload");
  let sub;
  try {
    // validated and compiled on a solver thread, never on the request thread
    sub = await readSubmissionOffThread(form, params.id);
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyFormResponse(err, form);
    throw err;
  }
  if (!sub.files) return data({ errors: sub.errors, values: sub.values }, { status: 400 });
  const saved = saveUploadedProblem(getDb(), params.id, sub.files, "edit", sub.plan);
  if (!saved.ok) {
    const errors: Record<string, string> = { ...errorsByField(saved.errors, uploadFieldOf) };
    if (saved.idError) errors.id = saved.idError;
    return data({ errors, values: sub.values }, { status: 400 });
  }
  return redirect(`/problems/${saved.id}?saved=${saved.versionHash.slice(0, 12)}`);
}

export default function EditProblem({ loaderData, actionData, params }: Route.ComponentProps) {
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm text-muted">
          <Link to={`/problems/${params.id}`} className="hover:underline">
            {params.id}
          </Link>{" "}
          / edit
        </p>
        <h1 className="text-3xl font-semibold tracking-tight">Edit {params.id}</h1>
        <p className="max-w-3xl text-muted">Saving a changed file creates a new version; results already recorded stay tied to the version they solved.</p>
      </div>
      <ProblemEditor values={actionData?.values ?? loaderData.values} errors={actionData?.errors ?? {}} idLocked saveLabel="Save new version" />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
