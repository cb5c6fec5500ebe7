import { useEffect } from "react";
import { data, Link, useFetcher } from "react-router";
import type { Route } from "./+types/cases.$id";
import { DemoBadge, FlightCaution, fmt, fmtDate, fmtSeconds } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { TrajectoryChart } from "~/components/charts/TrajectoryChart";
import { getDb } from "~/db/client.server";
import { getCase, type CaseTrajectory } from "~/models/cases.server";
import { requireUser } from "~/services/auth.server";
import { getCaseMesh } from "~/models/mesh.server";
import { MeshPanel } from "~/components/MeshPanel";
import { IterationPanel } from "~/components/runs/IterationPanel";
import { METRICS, metricLabel, statusLabel } from "~/vocabulary";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.c.caseKey ?? "Case"} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const id = Number(params.id);
  const c = Number.isInteger(id) && id > 0 ? getCase(getDb(), id) : null;
  if (!c) throw data({ message: `There is no case ${params.id}. Open a run and pick a cell of its matrix.` }, { status: 404 });
  return { c, mesh: getCaseMesh(getDb(), id) };
}

/** Every number's label comes from the vocabulary (app/vocabulary.ts); a formula is shown beside it. */
const NUMBER_LABELS: Record<string, string> = Object.fromEntries(Object.entries(METRICS).map(([k, m]) => [k, m.label]));
const SECONDS = new Set(["medianSeconds", "meanSeconds", "stddevSeconds", "minSeconds"]);
export default function CasePage({ loaderData }: Route.ComponentProps) {
  const { c, mesh } = loaderData;
  const fetcher = useFetcher<CaseTrajectory>();
  useEffect(() => {
    if (fetcher.state === "idle" && !fetcher.data) fetcher.load(`/api/cases/${c.id}?part=trajectory`);
  }, [c.id, fetcher]);
  const tr = fetcher.data;
  const extra = c.extra as Record<string, unknown>;
  return (
    <div className="space-y-6">
      <div className="space-y-1">
        <p className="text-sm text-muted">
          <Link to="/runs" className="hover:underline">Runs</Link> / <Link to={`/runs/${c.runId}`} className="hover:underline">run {c.run.commitHash.slice(0, 10)}</Link> / case
        </p>
        <h1 className="flex flex-wrap items-center gap-3 text-3xl font-semibold tracking-tight">
          <code className="text-2xl">{c.caseKey}</code> <DemoBadge show={c.run.isDemo} />
        </h1>
        <p className="text-muted">
          Problem {c.problemId} · scheme {c.scheme} · {c.intervals} intervals{c.degree ? ` × degree ${c.degree}` : ""} · suite {c.run.suite} on {c.run.branch ?? "(detached)"} · {fmtDate(c.run.startedAt)}
        </p>
        <p className={`text-lg font-semibold ${c.solved ? "text-good" : "text-bad"}`} data-testid="case-status" data-status={c.status}>{statusLabel("case", c.status)}</p>
        {c.message ? <p className="text-sm text-muted">{c.message}</p> : null}
        <p className="flex flex-wrap gap-2 text-sm">
          <Link className="btn-quiet" to={`/history?caseKey=${encodeURIComponent(c.caseKey)}&branch=${encodeURIComponent(c.run.branch ?? "main")}`}>History of this case</Link>
          <a className="btn-quiet" href={`/api/cases/${c.id}?format=csv`} download>Numbers CSV</a>
          <a className="btn-quiet" href={`/api/cases/${c.id}?part=log&format=csv`} download>Iteration log CSV</a>
          <a className="btn-quiet" href={`/api/cases/${c.id}?part=trajectory&format=csv`} download>States CSV</a>
          <a className="btn-quiet" href={`/api/cases/${c.id}?download=1`} download>JSON</a>
        </p>
      </div>
      <FlightCaution />
      <div className="grid gap-6 lg:grid-cols-[22rem_1fr]">
        <section className="card p-4" aria-labelledby="numbers-title">
          <h2 id="numbers-title" className="mb-2 font-semibold">All numbers</h2>
          <dl className="grid grid-cols-[1fr_auto] gap-x-3 gap-y-1 text-sm" data-testid="case-numbers">
            {Object.entries(c.numbers).map(([k, v]) => (
              <div key={k} className="contents">
                <dt className="text-muted">{NUMBER_LABELS[k] ?? metricLabel(k)}</dt>
                <dd className="num text-right">{SECONDS.has(k) ? fmtSeconds(v) : fmt(v, 6)}</dd>
              </div>
            ))}
            {Object.entries(extra).filter(([, v]) => typeof v === "number").map(([k, v]) => (
              <div key={k} className="contents">
                <dt className="text-muted">{metricLabel(k)}</dt>
                <dd className="num text-right">{fmt(v as number, 6)}</dd>
              </div>
            ))}
          </dl>
          <h3 className="mt-4 font-semibold">Re-simulation</h3>
          <p className="text-sm text-muted" data-testid="resim">
            {c.numbers.resimMiss === null
              ? "Not re-simulated (the solve did not converge, or the runner had no controls to integrate)."
              : <>The recovered controls integrated by an adaptive Dormand–Prince method miss the transcription's final state by <span className="num text-ink">{fmt(c.numbers.resimMiss)}</span>{typeof extra.maxPathViolation === "number" ? <>; the largest path-constraint violation along the way is <span className="num text-ink">{fmt(extra.maxPathViolation)}</span></> : null}.</>}
          </p>
          {c.samples.length ? <p className="mt-3 text-xs text-muted num">samples: {c.samples.slice(0, 30).map((s) => fmtSeconds(s)).join(", ")}{c.samples.length > 30 ? " …" : ""}</p> : null}
        </section>
        <section className="space-y-3" aria-labelledby="traj-title">
          <h2 id="traj-title" className="text-xl font-semibold">Trajectory over the reference</h2>
          {!tr ? (
            <p className="text-muted" aria-busy="true" data-testid="trajectory-loading">{fetcher.state === "loading" ? "Loading the trajectory…" : "Preparing the charts…"}</p>
          ) : !tr.solution.states && !tr.reference ? (
            <p className="card p-4 text-muted">No trajectory was stored for this case (it failed before a solution was recovered, or the solver under test returned none).</p>
          ) : (
            <>
              {tr.referenceNote ? <p className="text-sm text-warn">{tr.referenceNote}</p> : null}
              <h3 className="font-medium">States</h3>
              <div className="flex flex-wrap gap-3">{tr.stateNames.map((n) => <TrajectoryChart key={n} name={n} solution={tr.solution.states} reference={tr.reference} />)}</div>
              <h3 className="font-medium">Controls</h3>
              <div className="flex flex-wrap gap-3">{tr.controlNames.map((n) => <TrajectoryChart key={n} name={n} solution={tr.solution.controls} reference={tr.reference} step={c.scheme === "euler" || c.scheme === "rk4-shooting"} />)}</div>
              {tr.solution.costates ? (
                <>
                  <h3 className="font-medium">Costates</h3>
                  <div className="flex flex-wrap gap-3">{Object.keys(tr.solution.costates.columns).map((n) => <TrajectoryChart key={n} name={n} solution={tr.solution.costates} reference={tr.reference} referenceName={n.startsWith("lambda_") ? n : `lambda_${n}`} />)}</div>
                </>
              ) : <p className="text-sm text-muted">This scheme reports no costate estimates.</p>}
            </>
          )}
        </section>
      </div>
      <MeshPanel mesh={mesh} />
      <section className="space-y-2" aria-labelledby="log-title">
        <h2 id="log-title" className="text-xl font-semibold">NLP iteration log</h2>
        {c.log.length === 0 ? (
          <p className="text-muted">No iteration log was stored for this case.</p>
        ) : (
          <IterationPanel rows={c.log} />
        )}
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
