import { useEffect } from "react";
import { Form, Link, useFetcher } from "react-router";
import type { Route } from "./+types/history";
import { FlightCaution, fmt } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { HistoryChart } from "~/components/charts/HistoryChart";
import { getDb } from "~/db/client.server";
import { HISTORY_METRICS, HISTORY_METRIC_KEYS, historyOptions, latestRunBranch, type HistoryPoint } from "~/models/history.server";
import { requireUser } from "~/services/auth.server";
import { DIRECTION } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "History · Arcwatch" }];

/** The page loads only the pickers; the series itself comes from /api/history through a fetcher. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const url = new URL(request.url);
  const db = getDb();
  let branch = url.searchParams.get("branch") || "main";
  let opts = historyOptions(db, branch);
  if (!url.searchParams.get("branch") && opts.caseKeys.length === 0) {
    const latest = latestRunBranch(db);
    if (latest) {
      branch = latest;
      opts = historyOptions(db, branch);
    }
  }
  const caseKey = url.searchParams.get("caseKey") || opts.caseKeys[0] || "";
  const metricParam = url.searchParams.get("metric");
  const metric = HISTORY_METRIC_KEYS.find((k) => k === metricParam) ?? "medianSeconds";
  return { branch, caseKey, metric, ...opts, metrics: HISTORY_METRIC_KEYS.map((k) => ({ key: k, label: HISTORY_METRICS[k].label })) };
}

export default function History({ loaderData }: Route.ComponentProps) {
  const { branch, caseKey, metric, caseKeys, branches, metrics } = loaderData;
  const fetcher = useFetcher<{ points: HistoryPoint[]; label: string; error?: string }>();
  const src = caseKey ? `/api/history?${new URLSearchParams({ caseKey, metric, branch })}` : null;
  useEffect(() => {
    if (src) fetcher.load(src);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [src]);
  const series = fetcher.data;
  const regressionsShown = series?.points.filter((p) => p.mark === "regression").length ?? 0;
  const improvementsShown = series?.points.filter((p) => p.mark === "improvement").length ?? 0;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1 className="text-3xl font-semibold tracking-tight">History</h1>
          <p className="text-muted">One metric of one case along the commits of a branch, oldest on the left.</p>
        </div>
        {src ? (
          <span className="flex gap-2 text-sm">
            <a className="btn-quiet" href={`${src}&format=csv`} download data-testid="export-csv">CSV</a>
            <a className="btn-quiet" href={`${src}&download=1`} download data-testid="export-json">JSON</a>
          </span>
        ) : null}
      </div>
      <FlightCaution />
      <Form method="get" className="card grid gap-3 p-4 md:grid-cols-4" aria-label="Pick a series">
        <label className="space-y-1 text-sm">
          <span className="font-medium">Branch</span>
          <select name="branch" defaultValue={branch} className="input">
            {(branches.includes(branch) ? branches : [branch, ...branches]).map((b) => <option key={b} value={b}>{b}</option>)}
          </select>
        </label>
        <label className="space-y-1 text-sm md:col-span-2">
          <span className="font-medium">Case</span>
          <select name="caseKey" defaultValue={caseKey} className="input">
            {(caseKeys.includes(caseKey) || !caseKey ? caseKeys : [caseKey, ...caseKeys]).map((k) => <option key={k} value={k}>{k}</option>)}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="font-medium">Metric</span>
          <select name="metric" defaultValue={metric} className="input">
            {metrics.map((m) => <option key={m.key} value={m.key}>{m.label}</option>)}
          </select>
        </label>
        <div className="md:col-span-4"><button type="submit" className="btn">Show</button></div>
      </Form>
      {!caseKey ? (
        <p className="card p-6 text-muted">No runs on branch {branch} yet. Pick another branch, or <Link className="text-accent underline" to="/runs">look at the runs</Link>.</p>
      ) : !series ? (
        <p className="text-muted" aria-busy="true">Loading the series…</p>
      ) : series.error ? (
        <p className="text-bad" role="alert">{series.error}</p>
      ) : series.points.length === 0 ? (
        <p className="card p-6 text-muted">The case {caseKey} has no results on branch {branch}.</p>
      ) : (
        <>
          <p className="text-sm text-muted" data-testid="history-summary">
            {series.points.length} runs · <span className="text-bad">{DIRECTION.regression.symbol} {regressionsShown} with a {DIRECTION.regression.label}</span> · <span className="text-good">{DIRECTION.improvement.symbol} {improvementsShown} with an {DIRECTION.improvement.label}</span> · latest value {fmt(series.points.at(-1)?.value ?? null)}
            {series.points.some((p) => p.isDemo) ? " · includes demo data" : ""}
          </p>
          <HistoryChart points={series.points} label={series.label} log={metric !== "iterations" && metric !== "objective"} />
          <details className="text-sm" data-testid="history-commits">
            <summary className="cursor-pointer font-medium">The commits of these points (newest first)</summary>
            <ul className="mt-2 space-y-0.5">
              {[...series.points].reverse().slice(0, 30).map((p) => (
                <li key={p.runId} className="flex flex-wrap gap-2">
                  {p.isDemo ? <code className="num">{p.commitHash.slice(0, 10)}</code> : <Link className="num text-accent hover:underline" to={`/commits/${p.commitHash}`}>{p.commitHash.slice(0, 10)}</Link>}
                  <span className="min-w-0 truncate" data-ident>{p.commitSubject}</span>
                  <span className="num text-muted">{fmt(p.value)}</span>
                  {p.mark ? <span className={p.mark === "regression" ? "text-bad" : "text-good"}>{DIRECTION[p.mark].symbol}</span> : null}
                </li>
              ))}
            </ul>
          </details>
        </>
      )}
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
