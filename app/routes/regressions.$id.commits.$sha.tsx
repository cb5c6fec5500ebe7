import { redirect } from "react-router";
import type { Route } from "./+types/regressions.$id.commits.$sha";
import { requireUser } from "~/services/auth.server";

/** Old address of a commit seen from a regression: the commit page (/commits/:sha) shows it whole. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  return redirect(`/commits/${encodeURIComponent(params.sha)}`);
}
