import { data, Link, redirect } from "react-router";
import type { Route } from "./+types/problems.new";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { ProblemEditor } from "~/components/problems/ProblemEditor";
import { getDb } from "~/db/client.server";
import { saveUploadedProblem } from "~/models/problems.server";
import { errorsByField, uploadFieldOf, builderFieldOf } from "~/components/problems/form-model";
import { requireRole } from "~/services/auth.server";
import { busyFormResponse, readSubmissionOffThread, SolverPoolBusy } from "~/services/solver-pool.server";

export const meta: Route.MetaFunction = () => [{ title: "Add a problem · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "engineer");
  return null;
}

/** A refusal's Retry-After (solver threads busy) reaches the browser on a document request too. */
export const headers: Route.HeadersFunction = ({ actionHeaders }) => {
  const retry = actionHeaders.get("Retry-After");
  return retry ? { "Retry-After": retry } : new Headers();
};

export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "engineer");
  const form = await request.formData();
  let sub;
  try {
    // validated and compiled on a solver thread, never on the request thread
    sub = await readSubmissionOffThread(form);
  } catch (err) {
    if (err instanceof SolverPoolBusy) return busyFormResponse(err, form);
    throw err;
  }
  if (!sub.files) return data({ errors: sub.errors, values: sub.values }, { status: 400 });
  const saved = saveUploadedProblem(getDb(), sub.id, sub.files, "create", sub.plan);
  if (!saved.ok) {
    const errors: Record<string, string> = { ...(sub.mode === "upload" ? errorsByField(saved.errors, uploadFieldOf) : errorsByField(saved.errors, builderFieldOf)) };
    if (saved.idError) errors.id = saved.idError;
    return data({ errors, values: sub.values }, { status: 400 });
  }
  return redirect(`/problems/${saved.id}?saved=${saved.versionHash.slice(0, 12)}`);
}

export default function NewProblem({ actionData }: Route.ComponentProps) {
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm text-muted">
          <Link to="/problems" className="hover:underline">
            Problem library
          </Link>{" "}
          / add
        </p>
        <h1 className="text-3xl font-semibold tracking-tight">Add a reference problem</h1>
        <p className="max-w-3xl text-muted">
          Upload a problem file (format arcwatch-problem/1, see DEVELOPERS.md) with an optional reference trajectory, or build one with the form. Run a trial solve before saving.
          Saving creates the first version; suites that select every problem or one of its tags run it from their next run on, and its page lets you add it to any other suite or run it at once.
        </p>
      </div>
      <ProblemEditor values={actionData?.values ?? { mode: "upload" }} errors={actionData?.errors ?? {}} saveLabel="Save problem" />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
