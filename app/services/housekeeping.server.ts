/**
 * Periodic checks of the server process (started once, from app/entry.server.tsx): runs whose
 * recording process died are marked interrupted (app/models/run-liveness.server.ts), and sharded
 * runs past their deadline are closed as incomplete, naming the shards that never came
 * (app/models/run-groups.server.ts). Every ARCWATCH_HOUSEKEEPING_MS (default 15 s), and once at
 * start-up.
 */
import { getDb } from "~/db/client.server";
import { markDeadRuns } from "~/models/run-liveness.server";
import { closeOverdueGroups } from "~/models/run-groups.server";

const key = Symbol.for("arcwatch.housekeeping");
type G = typeof globalThis & { [key]?: NodeJS.Timeout };

export function housekeepingOnce(): void {
  const db = getDb();
  for (const d of markDeadRuns(db)) console.log(`[arcwatch] run ${d.id} marked interrupted: ${d.note}`);
  for (const g of closeOverdueGroups(db)) console.log(`[arcwatch] sharded run ${g.runId} closed incomplete: shards ${g.missing.join(", ")} never came`);
}

export function startHousekeeping(): void {
  const g = globalThis as G;
  if (g[key]) return;
  const every = Number(process.env.ARCWATCH_HOUSEKEEPING_MS ?? 15_000);
  const run = () => {
    try {
      housekeepingOnce();
    } catch (err) {
      console.error("[arcwatch] housekeeping:", err);
    }
  };
  run();
  g[key] = setInterval(run, Number.isFinite(every) && every >= 100 ? every : 15_000);
  g[key].unref();
}
