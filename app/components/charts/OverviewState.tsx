/**
 * The overview's state panels: the last run per branch, open regressions by kind and size,
 * the suite's health over the last commits (solved share per run as bars; a red tick marks a
 * run that found regressions), and runs in progress.
 */
import { Link } from "react-router";
import type { OverviewState } from "~/models/runs.server";
import { DemoBadge, fmtDate } from "../Caution";
import { scaleColour } from "./scale";
import { DIRECTION, kindLabel, statusLabel } from "~/vocabulary";

export function OverviewPanels({ state }: { state: OverviewState }) {
  const { branches, openByKind, health, healthBranch, inProgress } = state;
  return (
    <div className="grid gap-4 lg:grid-cols-2" data-testid="overview-state">
      <section className="card p-5 lg:col-span-2" aria-labelledby="branches-title">
        <h2 id="branches-title" className="mb-2 font-semibold">Last run per branch</h2>
        {branches.length === 0 ? <p className="text-sm text-muted">No runs on any branch yet.</p> : (
          <table className="w-full text-sm">
            <thead className="text-left text-muted"><tr><th className="py-1 pr-3">Branch</th><th className="pr-3">Commit</th><th className="pr-3">Suite</th><th className="pr-3 text-right">Solved</th><th className="pr-3 text-right">Regressions</th><th>Started</th></tr></thead>
            <tbody>
              {branches.map((b) => (
                <tr key={b.branch} className="border-t border-line/60">
                  <td className="py-1.5"><span className="flex items-center gap-2"><Link className="font-medium text-accent hover:underline" to={`/runs?branch=${encodeURIComponent(b.branch)}`}>{b.branch}</Link><DemoBadge show={b.isDemo} /></span></td>
                  <td><Link to={`/runs/${b.runId}`} className="hover:underline"><code className="num">{b.commitHash.slice(0, 10)}</code></Link> <span className="text-xs text-muted" data-ident>{b.commitSubject?.slice(0, 50)}</span></td>
                  <td>{b.suite}</td>
                  <td className="num pr-3 text-right">{b.solved}/{b.cases}</td>
                  <td className={`num pr-3 text-right ${b.regressions ? "font-semibold text-bad" : "text-muted"}`}>{b.regressions}</td>
                  <td className="num text-xs">{fmtDate(b.startedAt)}{b.status !== "complete" ? ` · ${statusLabel("run", b.status)}` : ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <section className="card p-5" aria-labelledby="open-title">
        <h2 id="open-title" className="mb-2 font-semibold">Open regressions by kind and size</h2>
        {openByKind.length === 0 ? <p className="text-sm text-muted">None open.</p> : (
          <table className="w-full text-sm" data-testid="open-by-kind">
            <thead className="text-left text-muted"><tr><th className="py-1">Kind</th><th className="text-right">&lt; ×1.5</th><th className="text-right">×1.5–3</th><th className="text-right">≥ ×3</th><th className="text-right">All</th></tr></thead>
            <tbody>
              {openByKind.map((k) => (
                <tr key={k.kind} className="border-t border-line/60"><td className="py-1.5 font-medium">{kindLabel(k.kind)}</td><td className="num text-right">{k.small}</td><td className="num text-right">{k.medium}</td><td className="num text-right text-bad">{k.large}</td><td className="num text-right font-semibold">{k.total}</td></tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <section className="card p-5" aria-labelledby="health-title">
        <h2 id="health-title" className="mb-2 font-semibold">Suite health on {healthBranch}, last {health.length} runs</h2>
        {health.length === 0 ? <p className="text-sm text-muted">No complete runs on {healthBranch} yet.</p> : (
          <div className="flex h-24 items-end gap-1" role="list" aria-label="Solved share per run, oldest first">
            {health.map((h) => {
              const share = h.cases ? h.solved / h.cases : 0;
              return (
                <Link key={h.runId} to={`/runs/${h.runId}`} role="listitem" className="relative flex h-full flex-1 items-end" title={`${h.commitHash.slice(0, 10)}: ${h.solved}/${h.cases} solved, ${h.regressions} regressions`} aria-label={`${h.commitHash.slice(0, 7)} ${h.solved} of ${h.cases} solved`}>
                  <span className="w-full rounded-t" style={{ height: `${Math.max(4, share * 100)}%`, background: scaleColour(1 - share) }} />
                  {h.regressions ? <span className="absolute left-0 right-0 top-0 h-1 bg-bad" /> : null}
                </Link>
              );
            })}
          </div>
        )}
        {health.length ? (
          <p className="mt-2 flex flex-wrap items-center gap-x-3 gap-y-1 text-xs text-muted" data-testid="health-legend">
            <span>One bar per run, oldest on the left. Height and colour: share of cases solved,</span>
            <span className="flex items-center gap-1">
              <span className="inline-block h-3 w-3 rounded-sm" style={{ background: scaleColour(0) }} /> all
            </span>
            <span className="flex items-center gap-1">
              <span className="inline-block h-3 w-3 rounded-sm" style={{ background: scaleColour(0.5) }} /> half
            </span>
            <span className="flex items-center gap-1">
              <span className="inline-block h-3 w-3 rounded-sm" style={{ background: scaleColour(1) }} /> none
            </span>
            <span className="flex items-center gap-1">
              <span className="inline-block h-1 w-4 bg-bad" /> cap: the run found a {DIRECTION.regression.label}
            </span>
          </p>
        ) : null}
      </section>
      <section className="card p-5 lg:col-span-2" aria-labelledby="progress-title">
        <h2 id="progress-title" className="mb-2 font-semibold">Runs in progress</h2>
        {inProgress.length === 0 ? <p className="text-sm text-muted">Nothing running. Engineers can <Link className="text-accent underline" to="/run-suite">run a suite on a branch</Link>.</p> : (
          <ul className="space-y-1 text-sm">
            {inProgress.map((r) => (
              <li key={r.runId}><Link className="text-accent hover:underline" to={r.jobId ? `/run-suite?job=${r.jobId}` : `/runs/${r.runId}`}>{r.suite} on {r.branch ?? "(detached)"} at <code className="num">{r.commitHash.slice(0, 10)}</code></Link> · {r.cases} cases done{r.shards ? <> · <span data-testid="waiting-shards">waiting for shards: {r.shards.in} of {r.shards.count} shards in</span></> : null} · since {fmtDate(r.startedAt)}</li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
