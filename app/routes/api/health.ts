import type { Route } from "./+types/health";
import { getDb } from "~/db/client.server";
import { pendingMigrations } from "~/db/migrate.server";
import { requireUser } from "~/services/auth.server";

/**
 * GET /api/health: the database answers and has no pending migrations. Like every API route
 * it needs a session or a token (monitors use a viewer token).
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const started = performance.now();
  try {
    const db = getDb();
    db.$client.prepare("select 1").get();
    const pending = pendingMigrations(db.$client);
    const ms = performance.now() - started;
    const ok = pending === 0;
    return Response.json(
      { status: ok ? "ok" : "degraded", database: { ok: true, pendingMigrations: pending, milliseconds: Number(ms.toFixed(2)) } },
      { status: ok ? 200 : 503 },
    );
  } catch (err) {
    return Response.json({ status: "down", database: { ok: false, error: (err as Error).message } }, { status: 503 });
  }
}
