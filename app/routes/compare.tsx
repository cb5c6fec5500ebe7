import { useEffect, useState } from "react";
import { Form, useFetcher } from "react-router";
import type { Route } from "./+types/compare";
import { CheapestTable, CompareViews } from "~/components/compare/CompareViews";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { getDb } from "~/db/client.server";
import { parseCompareQuery, type compare as CompareFn } from "~/models/compare.server";
import { cachedCompare, cachedComparableCommits, cachedProblemLibrary } from "~/services/data-cache.server";
import { requireUser } from "~/services/auth.server";
import { refinementCostForRuns } from "~/models/refinement-cost.server";
import { RefinementCostPanel } from "~/components/compare/RefinementCostPanel";
import { SCHEMES } from "~/engine/schemes/ids";

export const meta: Route.MetaFunction = () => [{ title: "Compare schemes · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const db = getDb();
  const q = parseCompareQuery(new URL(request.url).searchParams);
  const result = cachedCompare(db, q);
  return { result, commits: cachedComparableCommits(db), problems: cachedProblemLibrary(db).map((p) => ({ id: p.id, title: p.title })), refinement: refinementCostForRuns(db, result.a.runIds, q.problem, SCHEMES) };
}

type Result = ReturnType<typeof CompareFn>;

export default function Compare({ loaderData }: Route.ComponentProps) {
  const { commits, problems } = loaderData;
  const q = loaderData.result.query;
  const [tolText, setTolText] = useState(String(q.tol));
  const fetcher = useFetcher<Result>();
  const result: Result = fetcher.data ?? loaderData.result;
  useEffect(() => setTolText(String(q.tol)), [q.tol]);
  const tol = Number(tolText);
  const tolOk = Number.isFinite(tol) && tol > 0;
  useEffect(() => {
    if (!tolOk || tol === result.query.tol) return;
    const p = new URLSearchParams();
    if (q.problem) p.set("problem", q.problem);
    if (q.a) p.set("a", q.a);
    if (q.b) p.set("b", q.b);
    p.set("metric", q.metric);
    p.set("tol", String(tol));
    const t = setTimeout(() => fetcher.load(`/api/compare?${p}`), 250);
    return () => clearTimeout(t);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [tolText, q.problem, q.a, q.b, q.metric]);
  const metricLabel = q.metric === "state" ? "max state error" : "relative objective error";
  const views = result.b ? [result.a, result.b] : [result.a];
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Compare schemes</h1>
        <p className="text-muted">For one problem or the whole library at one commit; choose a second commit to see both side by side.</p>
      </div>
      <Form method="get" className="card flex flex-wrap items-end gap-3 p-4" data-testid="compare-form">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Problem</span>
          <select name="problem" defaultValue={q.problem ?? ""} className="input">
            <option value="">whole library</option>
            {problems.map((p) => (
              <option key={p.id} value={p.id}>
                {p.id}
              </option>
            ))}
          </select>
        </label>
        {(["a", "b"] as const).map((k) => (
          <label key={k} className="space-y-1 text-sm">
            <span className="block font-medium">{k === "a" ? "Commit" : "Second commit (optional)"}</span>
            <select name={k} defaultValue={(k === "a" ? q.a : q.b) ?? ""} className="input max-w-72">
              <option value="">{k === "a" ? "latest run on main" : "none"}</option>
              {commits.map((c) => (
                <option key={c.commitHash} value={c.commitHash}>
                  {c.commitHash.slice(0, 10)} {c.subject ? `· ${c.subject.slice(0, 40)}` : ""}
                </option>
              ))}
            </select>
          </label>
        ))}
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Error</span>
          <select name="metric" defaultValue={q.metric} className="input">
            <option value="objective">relative objective error</option>
            <option value="state">max state error</option>
          </select>
        </label>
        <input type="hidden" name="tol" value={tolOk ? tolText : String(q.tol)} />
        <button type="submit" className="btn">
          Show
        </button>
      </Form>
      <section className="card space-y-3 p-4">
        <div className="flex flex-wrap items-end gap-3">
          <label className="space-y-1 text-sm">
            <span className="block font-medium">Tolerance on the {metricLabel}</span>
            <input name="tolInput" value={tolText} onChange={(e) => setTolText(e.target.value)} className="input w-36" aria-invalid={tolOk ? undefined : true} data-testid="tolerance" />
          </label>
          {!tolOk ? <p className="text-sm text-bad">Enter a positive number such as 1e-6.</p> : null}
          {fetcher.state !== "idle" ? <p className="text-sm text-muted">Updating…</p> : null}
        </div>
        <div className={`grid gap-4 ${views.length === 2 ? "lg:grid-cols-2" : ""}`}>
          {views.map((v, i) => (
            <div key={i} className="space-y-2" data-cheapest-for={i === 0 ? "a" : "b"}>
              <h2 className="font-medium">
                Cheapest setting meeting {result.query.tol.toExponential(0)} at <span className="num">{v.commit?.slice(0, 10) ?? "—"}</span>
              </h2>
              <CheapestTable rows={v.cheapest} tol={result.query.tol} />
            </div>
          ))}
        </div>
      </section>
      <div className={`grid gap-6 ${views.length === 2 ? "xl:grid-cols-2" : ""}`}>
        {views.map((v, i) => (
          <div key={i} className="space-y-3" data-compare-view={i === 0 ? "a" : "b"}>
            <h2 className="text-lg font-semibold">
              <span className="num">{v.commit?.slice(0, 10) ?? "no run"}</span> {v.commitSubject ? <span className="text-muted">· {v.commitSubject}</span> : null}
            </h2>
            <CompareViews view={v} singleProblem={q.problem !== null} metricLabel={metricLabel} />
          </div>
        ))}
      </div>
      <RefinementCostPanel rows={loaderData.refinement} commit={loaderData.result.a.commit} />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
