import type { Route } from "./+types/not-found";
import { requireUser } from "~/services/auth.server";

/** Any other /api/... path: 401 without credentials, else a 404 JSON. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return Response.json({ error: `No API route at ${new URL(request.url).pathname}.` }, { status: 404 });
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request);
  return Response.json({ error: `No API route at ${new URL(request.url).pathname}.` }, { status: 404 });
}
