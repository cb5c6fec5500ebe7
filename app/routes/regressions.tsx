import { Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/regressions";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { getDb } from "~/db/client.server";
import { REGRESSION_KINDS, REGRESSION_STATUSES } from "~/db/schema";
import { listRegressions, regressionListQuery } from "~/models/regressions.server";
import { requireUser } from "~/services/auth.server";
import { TONE_CLASS, directionOf, kindLabel, metricLabel, statusEntry, statusLabel, statusTone } from "~/vocabulary";
import { fmtAbRatio } from "~/runs/ab-result";
import { DemoBadge } from "~/components/Caution";

export const meta: Route.MetaFunction = () => [{ title: "Regressions · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const q = regressionListQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
  return { rows: listRegressions(getDb(), q), kinds: REGRESSION_KINDS, statuses: REGRESSION_STATUSES };
}

const num = (v: number | null) => (v === null ? "—" : Math.abs(v) < 1e-3 || Math.abs(v) >= 1e4 ? v.toExponential(2) : v.toPrecision(4));

export default function Regressions({ loaderData }: Route.ComponentProps) {
  const [params] = useSearchParams();
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Regressions</h1>
        <p className="text-muted">Changes the runner flagged against each run's baseline, newest first.</p>
      </div>
      <Form method="get" className="flex flex-wrap items-end gap-2">
        <select name="status" defaultValue={params.get("status") ?? ""} className="input w-40" aria-label="Status">
          <option value="">any status</option>
          {loaderData.statuses.map((s) => (
            <option key={s}>{s}</option>
          ))}
        </select>
        <select name="kind" defaultValue={params.get("kind") ?? ""} className="input w-40" aria-label="Kind">
          <option value="">any kind</option>
          {loaderData.kinds.map((s) => (
            <option key={s}>{s}</option>
          ))}
        </select>
        <select name="direction" defaultValue={params.get("direction") ?? ""} className="input w-44" aria-label="Direction">
          <option value="">both directions</option>
          <option value="regression">regressions</option>
          <option value="improvement">improvements</option>
        </select>
        <input name="problem" defaultValue={params.get("problem") ?? ""} placeholder="problem id" className="input w-52" aria-label="Problem" />
        <select name="demo" defaultValue={params.get("demo") ?? "all"} className="input w-52" aria-label="Demo data" data-testid="demo-filter">
          <option value="all">real and demo findings</option>
          <option value="hide">real findings only</option>
          <option value="only">demo findings only</option>
        </select>
        <button className="btn-quiet" type="submit">
          Filter
        </button>
      </Form>
      <section className="card overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="regressions-table">
          <thead className="border-b border-line text-muted">
            <tr>
              <th className="px-3 py-3 font-medium">case</th>
              <th className="px-3 py-3 font-medium">kind</th>
              <th className="px-3 py-3 font-medium">metric</th>
              <th className="px-3 py-3 text-right font-medium">before</th>
              <th className="px-3 py-3 text-right font-medium">after</th>
              <th className="px-3 py-3 text-right font-medium">ratio</th>
              <th className="px-3 py-3 font-medium">commit</th>
              <th className="px-3 py-3 font-medium">status</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.rows.length === 0 ? (
              <tr>
                <td colSpan={8} className="px-3 py-6 text-center text-muted">
                  Nothing flagged for this filter.
                </td>
              </tr>
            ) : (
              loaderData.rows.map((r) => (
                <tr key={r.id} className="border-b border-line last:border-0" data-regression-row={r.id}>
                  <td className="px-3 py-2">
                    <Link to={`/regressions/${r.id}`} className="num hover:underline">
                      {r.caseKey}
                    </Link>
                    <DemoBadge show={r.isDemo} />
                  </td>
                  <td className={`px-3 py-2 ${TONE_CLASS[directionOf(r.direction).tone]}`} title={directionOf(r.direction).label}>
                    {directionOf(r.direction).symbol} {kindLabel(r.kind)}
                  </td>
                  <td className="px-3 py-2">{metricLabel(r.metric)}</td>
                  <td className="num px-3 py-2 text-right">{num(r.before)}</td>
                  <td className="num px-3 py-2 text-right">{num(r.after)}</td>
                  <td className="num px-3 py-2 text-right">{r.ratio === null ? "—" : r.ratio.toFixed(3)}</td>
                  <td className="num px-3 py-2" title={r.commitSubject ?? ""}>
                    {r.isDemo ? r.commitHash.slice(0, 10) : <Link to={`/commits/${r.commitHash}`} className="text-accent hover:underline">{r.commitHash.slice(0, 10)}</Link>}
                  </td>
                  <td className={`px-3 py-2 ${statusTone("regression", r.status)}`}>
                    {statusLabel("regression", r.status)}
                    {r.assignee ? <span className="block text-xs text-muted">{r.assignee}</span> : null}
                    {r.ab ? (
                      <span className={`block text-xs ${statusTone("ab", r.ab.state)}`} title={statusEntry("ab", r.ab.state)?.definition} data-ab-state={r.ab.state}>
                        {statusLabel("ab", r.ab.state)}
                        {r.ab.ratio !== null ? ` ${fmtAbRatio(r.ab.ratio, r.ab.low, r.ab.high)}` : ""}
                      </span>
                    ) : null}
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
