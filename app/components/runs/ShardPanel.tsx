import { fmtDate, fmtSeconds } from "~/components/Caution";

/** One shard as the run page shows it (app/models/run-groups.server.ts `runShardsOf`). */
export interface ShardRow {
  index: number;
  state: "received" | "missing" | "waiting";
  machine: string | null;
  machineClass: string | null;
  sourceStatus: string | null;
  cases: number;
  seconds: number | null;
  receivedAt: number | null;
}

const STATE_WORDS: Record<ShardRow["state"], string> = { received: "in", missing: "never came", waiting: "waiting" };

function classLabel(c: string | null): string {
  if (!c) return "—";
  return /^[0-9a-f]{64}$/.test(c) ? `fingerprint ${c.slice(0, 10)}` : c;
}

/**
 * Shards of a sharded run: how many are in, and per shard its machine, class, state, case count
 * and time on its runner; says when timings are not compared (shards from different classes).
 */
export function ShardPanel({ count, shardsIn, deadlineAt, timingsCompared, status, shards }: { count: number; shardsIn: number; deadlineAt: number | null; timingsCompared: boolean; status: string; shards: ShardRow[] }) {
  return (
    <section className="space-y-2" aria-labelledby="shards-title">
      <h2 id="shards-title" className="text-xl font-semibold">
        Shards: <span data-testid="shards-in">{shardsIn} of {count} shards in</span>
      </h2>
      {status === "running" && deadlineAt ? (
        <p className="text-sm text-muted">Waiting for the rest until {fmtDate(deadlineAt)}; regressions are checked once, when the last shard arrives.</p>
      ) : null}
      {!timingsCompared ? (
        <p className="rounded-lg border border-warn/50 bg-warn/10 px-3 py-2 text-sm" role="note" data-testid="timings-not-compared">
          The shards ran on different machine classes, so this run's timings are not compared with any baseline; accuracy, robustness and arc
          structure are checked as usual.
        </p>
      ) : null}
      <div className="card overflow-x-auto">
        <table className="w-full text-sm" data-testid="run-shards">
          <thead className="bg-raised/60 text-left">
            <tr>
              <th className="px-3 py-2">Shard</th>
              <th className="px-3 py-2">State</th>
              <th className="px-3 py-2">Machine</th>
              <th className="px-3 py-2">Class</th>
              <th className="px-3 py-2 text-right">Cases</th>
              <th className="px-3 py-2 text-right">Time on runner</th>
              <th className="px-3 py-2">Arrived</th>
            </tr>
          </thead>
          <tbody>
            {shards.map((s) => (
              <tr key={s.index} className="border-t border-line/60" data-shard={s.index} data-shard-state={s.state}>
                <td className="num px-3 py-1.5">{s.index}/{count}</td>
                <td className={`px-3 py-1.5 ${s.state === "missing" ? "text-bad" : s.state === "waiting" ? "text-muted" : ""}`}>
                  {STATE_WORDS[s.state]}
                  {s.sourceStatus && s.sourceStatus !== "complete" ? ` (${s.sourceStatus} on its runner)` : ""}
                </td>
                <td className="px-3 py-1.5">{s.machine ?? "—"}</td>
                <td className="px-3 py-1.5">{classLabel(s.machineClass)}</td>
                <td className="num px-3 py-1.5 text-right">{s.state === "received" ? s.cases : "—"}</td>
                <td className="num px-3 py-1.5 text-right">{fmtSeconds(s.seconds)}</td>
                <td className="px-3 py-1.5 text-muted">{s.receivedAt ? fmtDate(s.receivedAt) : "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}
