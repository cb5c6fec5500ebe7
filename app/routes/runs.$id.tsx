import { useEffect } from "react";
import { data, Link, useRevalidator, useSearchParams } from "react-router";
import type { Route } from "./+types/runs.$id";
import { DemoBadge, FlightCaution, fmt, fmtDate, fmtSeconds } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { inkOn, logPosition, scaleColour } from "~/components/charts/scale";
import { getDb } from "~/db/client.server";
import { getRun, type MatrixCell } from "~/models/runs.server";
import { getJob } from "~/models/jobs.server";
import { runShardsOf } from "~/models/run-groups.server";
import { ShardPanel } from "~/components/runs/ShardPanel";
import { requireUser } from "~/services/auth.server";
import { DIRECTION, METRICS, TONE_CLASS, directionOf, kindLabel, metricLabel, statusLabel, statusTone } from "~/vocabulary";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Run ${data?.run.run.commitHash.slice(0, 10) ?? ""} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const run = getRun(getDb(), params.id);
  if (!run) throw data({ message: `There is no run ${params.id}. It may have been removed; pick one from the runs table.` }, { status: 404 });
  const job = run.run.jobId ? getJob(getDb(), run.run.jobId) : undefined;
  return { run, jobStatus: job?.status ?? null, shards: runShardsOf(getDb(), params.id) };
}

/** Error bounds of the colour scale: 1e-8 (as good as references get) to 1e-1 (wrong). */
const ERROR_LO = 1e-8;
const ERROR_HI = 1e-1;

function meshLabel(c: Pick<MatrixCell, "intervals" | "degree">) {
  return c.degree ? `${c.intervals}×${c.degree}` : `${c.intervals}`;
}

function cellPosition(c: MatrixCell, mode: "error" | "time", tMin: number, tMax: number): number {
  if (!c.solved) return 1;
  if (mode === "time") return tMax > tMin && c.medianSeconds !== null ? logPosition(c.medianSeconds, tMin, tMax) : 0;
  return logPosition(cellError(c), ERROR_LO, ERROR_HI);
}

/** The error a cell is coloured by and shows: the larger of the objective and state errors. */
function cellError(c: MatrixCell): number {
  return Math.max(c.objectiveErrorRel ?? 0, c.stateError ?? 0);
}

export default function RunPage({ loaderData }: Route.ComponentProps) {
  const { run: detail, jobStatus, shards } = loaderData;
  const { run, cases, regressions } = detail;
  const [params, setParams] = useSearchParams();
  const revalidator = useRevalidator();
  // A run still recording: refresh its matrix every 3 s until it ends.
  useEffect(() => {
    if (run.status !== "running") return;
    const t = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 3000);
    return () => clearInterval(t);
  }, [run.status, revalidator]);
  const mode = params.get("colour") === "time" ? "time" : "error";
  const problems = [...new Set(cases.map((c) => c.problemId))];
  const columns = [...new Map(cases.map((c) => [`${c.scheme}/${meshLabel(c)}`, { scheme: c.scheme, mesh: meshLabel(c) }])).entries()].sort((a, b) => a[0].localeCompare(b[0]));
  const byKey = new Map(cases.map((c) => [`${c.problemId}|${c.scheme}/${meshLabel(c)}`, c]));
  const times = cases.filter((c) => c.solved && c.medianSeconds && c.medianSeconds > 0).map((c) => c.medianSeconds!);
  const tMin = times.length ? Math.min(...times) : 0;
  const tMax = times.length ? Math.max(...times) : 0;
  const regByCase = new Map<string, typeof regressions>();
  for (const r of regressions) regByCase.set(r.caseKey, [...(regByCase.get(r.caseKey) ?? []), r]);
  const solved = cases.filter((c) => c.solved).length;
  // why a run ended early, in words: cancelled from the job panel, or stopped otherwise
  const stopped = run.status === "interrupted" ? (jobStatus === "cancelled" ? "cancelled" : jobStatus === "died" ? "stopped with its server" : "interrupted") : null;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-start justify-between gap-4">
        <div className="space-y-1">
          <p className="text-sm text-muted"><Link to="/runs" className="hover:underline">Runs</Link> / run</p>
          <h1 className="flex items-center gap-3 text-3xl font-semibold tracking-tight">
            Suite {detail.suite} at {run.isDemo ? <code className="num">{run.commitHash.slice(0, 10)}</code> : <Link to={`/commits/${run.commitHash}`} className="num text-accent hover:underline" data-testid="commit-link"><code>{run.commitHash.slice(0, 10)}</code></Link>} <DemoBadge show={run.isDemo} />
          </h1>
          <p className="text-muted" data-ident>{run.commitSubject}</p>
          <p className="text-sm text-muted">
            {run.branch ?? "(detached)"} · {statusLabel("run", run.status)} · started {fmtDate(run.startedAt)} · {run.finishedAt ? fmtSeconds((run.finishedAt - run.startedAt) / 1000) : "not finished"} ·{" "}
            <span data-testid="run-solved">{solved}/{cases.length} solved</span> · machine <code className="num text-xs">{run.machineKey.slice(0, 12)}</code>
            {run.jobId ? <> · <Link className="text-accent underline" to={`/run-suite?job=${run.jobId}`}>job {run.jobId}</Link></> : null}
          </p>
        </div>
        <span className="flex gap-2 text-sm">
          <a className="btn-quiet" href={`/api/runs/${run.id}?format=csv`} download>Cases CSV</a>
          <a className="btn-quiet" href={`/api/runs/${run.id}?download=1`} download>JSON</a>
        </span>
      </div>
      {run.statusNote ? (
        <p className={`rounded-lg border px-3 py-2 text-sm ${run.status === "complete" ? "border-line" : "border-bad/50 bg-bad/10"}`} role="status" data-testid="run-status-note">
          <strong>{run.status === "interrupted" ? "Interrupted" : run.status === "failed" ? "Failed" : "Note"}:</strong> {run.statusNote} Finished cases are kept{run.status === "complete" ? "" : "; this run is not used as a baseline"}.
        </p>
      ) : null}
      {shards ? <ShardPanel count={shards.count} shardsIn={shards.in} deadlineAt={shards.deadlineAt} timingsCompared={shards.timingsCompared} status={run.status} shards={shards.shards} /> : null}
      <FlightCaution />
      <section className="space-y-3" aria-labelledby="matrix-title">
        <div className="flex flex-wrap items-center justify-between gap-3">
          <h2 id="matrix-title" className="text-xl font-semibold">Problems × schemes × meshes</h2>
          <div role="radiogroup" aria-label="Colour by" className="flex gap-1 text-sm">
            {(["error", "time"] as const).map((m) => (
              <button key={m} type="button" role="radio" aria-checked={mode === m} className={`btn-quiet ${mode === m ? "bg-raised font-semibold" : ""}`} onClick={() => setParams((p) => { p.set("colour", m); return p; }, { replace: true })}>
                Colour by {m === "error" ? "error" : "time"}
              </button>
            ))}
          </div>
        </div>
        {cases.length === 0 ? (
          <p className="card p-6 text-muted" data-testid="run-empty">
            {stopped ? `This run was ${stopped} before any case finished.` : `This run has no finished cases yet${run.status === "running" ? "; it is still running, reload in a moment." : "."}`}
          </p>
        ) : (
          <div className="card overflow-x-auto">
            <table className="text-xs" data-testid="run-matrix">
              <thead>
                <tr>
                  <th scope="col" className="px-2 py-2 text-left">Problem</th>
                  {columns.map(([k, c]) => (
                    <th key={k} scope="col" className="px-2 py-2 text-left font-semibold">
                      {c.scheme}
                      <br />
                      <span className="num font-normal text-muted">N = {c.mesh}</span>
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {problems.map((p) => (
                  <tr key={p}>
                    <th scope="row" className="px-2 py-1 text-left font-medium">{p}</th>
                    {columns.map(([k]) => {
                      const c = byKey.get(`${p}|${k}`);
                      if (!c) return <td key={k} className="px-2 py-1 text-muted">·</td>;
                      const bg = scaleColour(cellPosition(c, mode, tMin, tMax));
                      const regs = regByCase.get(c.caseKey) ?? [];
                      return (
                        <td key={k} className="p-0.5">
                          <Link
                            to={`/cases/${c.id}`}
                            className="block min-w-[7.5rem] rounded px-2 py-1 focus-visible:outline-2"
                            style={{ background: bg, color: inkOn(bg) }}
                            data-testid="matrix-cell"
                            title={`${c.caseKey}: ${statusLabel("case", c.status)}${c.message ? ` — ${c.message}` : ""}`}
                          >
                            <span className="block font-semibold">{statusLabel("case", c.status)}{regs.some((r) => r.direction === "regression") ? ` ${DIRECTION.regression.symbol}` : regs.length ? ` ${DIRECTION.improvement.symbol}` : ""}</span>
                            <span className="num block" title={`${METRICS.objectiveErrorRel.label} ${fmt(c.objectiveErrorRel)}, ${METRICS.stateError.label} ${fmt(c.stateError)}`}>{METRICS.worstError.label.toLowerCase()} {c.objectiveErrorRel === null && c.stateError === null ? fmt(null) : fmt(cellError(c))}</span>
                            <span className="num block">{fmtSeconds(c.medianSeconds)}</span>
                          </Link>
                        </td>
                      );
                    })}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        <Legend mode={mode} tMin={tMin} tMax={tMax} />
      </section>
      <section className="space-y-2" aria-labelledby="regs-title">
        <h2 id="regs-title" className="text-xl font-semibold">Regressions and improvements found</h2>
        {regressions.length === 0 && run.status !== "complete" ? (
          <p className="text-muted" data-testid="run-not-checked">
            Not checked: only complete runs are compared with a baseline{stopped ? `, and this one was ${stopped} (${cases.length} case${cases.length === 1 ? "" : "s"} finished, kept above)` : run.status === "running" ? ", and this one is still running" : ""}.
          </p>
        ) : regressions.length === 0 ? (
          <p className="text-muted">None: either nothing moved beyond the suite's thresholds, or there was no baseline run to compare with.</p>
        ) : (
          <div className="card overflow-x-auto">
            <table className="w-full text-sm" data-testid="run-regressions">
              <thead className="bg-raised/60 text-left"><tr><th className="px-3 py-2">Case</th><th className="px-3 py-2">Kind</th><th className="px-3 py-2">Metric</th><th className="px-3 py-2 text-right">Before</th><th className="px-3 py-2 text-right">After</th><th className="px-3 py-2 text-right">Ratio</th><th className="px-3 py-2">Status</th></tr></thead>
              <tbody>
                {regressions.map((r) => (
                  <tr key={r.id} className="border-t border-line/60">
                    <td className="px-3 py-1.5"><Link className="text-accent hover:underline" to={`/history?caseKey=${encodeURIComponent(r.caseKey)}&branch=${encodeURIComponent(run.branch ?? "main")}&metric=${r.kind === "speed" ? "medianSeconds" : "objectiveErrorRel"}`}>{r.caseKey}</Link></td>
                    <td className={`px-3 py-1.5 ${TONE_CLASS[directionOf(r.direction).tone]}`}>{directionOf(r.direction).symbol} {kindLabel(r.kind)} {directionOf(r.direction).label}</td>
                    <td className="px-3 py-1.5">{metricLabel(r.metric)}</td>
                    <td className="num px-3 py-1.5 text-right">{fmt(r.before)}</td>
                    <td className="num px-3 py-1.5 text-right">{fmt(r.after)}</td>
                    <td className="num px-3 py-1.5 text-right">{fmt(r.ratio)}</td>
                    <td className={`px-3 py-1.5 ${statusTone("regression", r.status)}`}>{statusLabel("regression", r.status)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </div>
  );
}

function Legend({ mode, tMin, tMax }: { mode: "error" | "time"; tMin: number; tMax: number }) {
  const stops = Array.from({ length: 11 }, (_, i) => i / 10);
  return (
    <div className="flex flex-wrap items-center gap-3 text-xs text-muted" aria-label="Colour scale">
      <span>{mode === "error" ? `${METRICS.worstError.label} ≤ ${fmt(ERROR_LO)}` : `fastest ${fmtSeconds(tMin)}`}</span>
      <span className="flex h-3 w-48 overflow-hidden rounded" aria-hidden="true">
        {stops.map((s) => <span key={s} className="flex-1" style={{ background: scaleColour(s) }} />)}
      </span>
      <span>{mode === "error" ? `≥ ${fmt(ERROR_HI)} or not solved` : `slowest ${fmtSeconds(tMax)}; unsolved at the red end`}</span>
      <span>· log scale · {DIRECTION.regression.symbol} {DIRECTION.regression.label}, {DIRECTION.improvement.symbol} {DIRECTION.improvement.label} · <Link to="/glossary" className="underline">glossary</Link></span>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
