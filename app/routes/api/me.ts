import type { Route } from "./+types/me";
import { requireUser } from "~/services/auth.server";

/** GET /api/me: who the session or token acts as. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return Response.json({ id: user.id, email: user.email, name: user.name, role: user.role, via: user.via });
}
