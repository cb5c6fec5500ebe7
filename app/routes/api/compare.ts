import type { Route } from "./+types/compare";
import { getDb } from "~/db/client.server";
import { parseCompareQuery } from "~/models/compare.server";
import { cachedCompare } from "~/services/data-cache.server";
import { requireUser } from "~/services/auth.server";

/**
 * GET /api/compare?problem=<id>&a=<commit>&b=<commit>&tol=<tolerance>&metric=objective|state
 * (viewer or token). Without `problem`, the whole library; without `a`, the latest run on main.
 * Answers `{ query, a, b }`, each view with points, convergence (fitted and theoretical orders),
 * cheapest setting per problem, and the time and accuracy performance profiles.
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return Response.json(cachedCompare(getDb(), parseCompareQuery(new URL(request.url).searchParams)));
}
