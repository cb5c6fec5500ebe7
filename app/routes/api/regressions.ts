import type { Route } from "./+types/regressions";
import { getDb } from "~/db/client.server";
import { listRegressions, regressionListQuery } from "~/models/regressions.server";
import { requireUser } from "~/services/auth.server";

/** GET /api/regressions?status=&kind=&direction=&problem=&limit= (viewer or token): newest first. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const q = regressionListQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
  return Response.json({ regressions: listRegressions(getDb(), q) });
}
