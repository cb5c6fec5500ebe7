import { data } from "react-router";
import type { Route } from "./+types/not-found";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { requireUser } from "~/services/auth.server";

/** Unknown page: signed-out visitors go to sign-in first; signed-in users get a 404. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  throw data({ message: `There is no page at ${new URL(request.url).pathname}.` }, { status: 404 });
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request);
  throw data({ message: "Nothing to submit here." }, { status: 404 });
}

export default function NotFound() {
  return null;
}

export const ErrorBoundary = RouteErrorBoundary;
