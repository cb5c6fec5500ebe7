import { useEffect, useRef, useState } from "react";
import { Form, Link, useNavigation, useSubmit } from "react-router";
import type { Route } from "./+types/compare";
import { CheapestTable, CompareViews, SourcesTable, sourceLabel } from "~/components/compare/CompareViews";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { getDb } from "~/db/client.server";
import { parseCompareQuery } from "~/models/compare.server";
import { cachedCompare, cachedComparableCommits } from "~/services/data-cache.server";
import { libraryProblemTitles } from "~/models/problems.server";
import { requireUser } from "~/services/auth.server";
import { refinementCostForRuns } from "~/models/refinement-cost.server";
import { RefinementCostPanel } from "~/components/compare/RefinementCostPanel";
import { SCHEMES } from "~/engine/schemes/ids";
import { METRICS } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Compare schemes · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const db = getDb();
  const q = parseCompareQuery(new URL(request.url).searchParams);
  const result = cachedCompare(db, q);
  return { result, commits: cachedComparableCommits(db), problems: libraryProblemTitles(), refinement: refinementCostForRuns(db, result.a.runIds, q.problem, SCHEMES) };
}

/**
 * Everything on this page is built from the URL (the loader's answer): the tolerance box
 * changes the URL (replacing the history entry) after a short pause, so a table can never show
 * an earlier selection's problem.
 */
export default function Compare({ loaderData }: Route.ComponentProps) {
  const { commits, problems, result } = loaderData;
  const q = result.query;
  const navigation = useNavigation();
  const submit = useSubmit();
  const formRef = useRef<HTMLFormElement>(null);
  // The menus hold what the user picked until Show; each follows the URL when the URL's value changes.
  const [problem, setProblem] = useState(q.problem ?? "");
  const [commitA, setCommitA] = useState(q.a ?? "");
  const [commitB, setCommitB] = useState(q.b ?? "");
  const [metric, setMetric] = useState<string>(q.metric);
  useEffect(() => setProblem(q.problem ?? ""), [q.problem]);
  useEffect(() => setCommitA(q.a ?? ""), [q.a]);
  useEffect(() => setCommitB(q.b ?? ""), [q.b]);
  useEffect(() => setMetric(q.metric), [q.metric]);
  const [tolText, setTolText] = useState(String(q.tol));
  // Follow the URL when it changes elsewhere (links, back button), but keep the user's spelling.
  useEffect(() => setTolText((t) => (Number(t) === q.tol ? t : String(q.tol))), [q.tol]);
  const tol = Number(tolText);
  const tolOk = tolText.trim() !== "" && Number.isFinite(tol) && tol > 0;
  useEffect(() => {
    if (!tolOk || tol === q.tol || !formRef.current) return;
    const form = formRef.current;
    const t = setTimeout(() => submit(form, { replace: true, preventScrollReset: true }), 300);
    return () => clearTimeout(t);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [tolText]);
  const loading = navigation.state !== "idle" && navigation.location?.pathname === "/compare";
  const metricLabel = (q.metric === "state" ? METRICS.stateError : METRICS.objectiveErrorRel).label.toLowerCase();
  const views = result.b ? [result.a, result.b] : [result.a];
  const bOtherSource = result.b && result.b.source !== result.a.source;
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Compare schemes</h1>
        <p className="text-muted">For one problem or the whole library at one commit; choose a second commit to see both side by side.</p>
      </div>
      <Form method="get" ref={formRef} className="card flex flex-wrap items-end gap-3 p-4" data-testid="compare-form">
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Problem</span>
          <select name="problem" value={problem} onChange={(e) => setProblem(e.target.value)} className="input" data-testid="compare-problem">
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
            <select name={k} value={k === "a" ? commitA : commitB} onChange={(e) => (k === "a" ? setCommitA : setCommitB)(e.target.value)} className="input max-w-72">
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
          <select name="metric" value={metric} onChange={(e) => setMetric(e.target.value)} className="input">
            <option value="objective">{METRICS.objectiveErrorRel.label}</option>
            <option value="state">{METRICS.stateError.label}</option>
          </select>
        </label>
        {result.a.sources.length > 1 ? (
          <label className="space-y-1 text-sm">
            <span className="block font-medium">Timings from</span>
            <select name="suite" key={result.a.source ?? ""} defaultValue={result.a.source ?? ""} className="input max-w-80" data-testid="timing-source" onChange={(e) => submit(e.currentTarget.form, { preventScrollReset: true })}>
              {result.a.sources.map((s) => (
                <option key={s.key} value={s.key} disabled={s.cases === 0}>
                  {sourceLabel(s)} · {s.cases} cases
                </option>
              ))}
            </select>
          </label>
        ) : q.suite ? (
          <input type="hidden" name="suite" value={q.suite} />
        ) : null}
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Tolerance on the {metricLabel}</span>
          <input name="tol" value={tolText} onChange={(e) => setTolText(e.target.value)} className="input w-36" aria-invalid={tolOk ? undefined : true} data-testid="tolerance" />
        </label>
        <button type="submit" className="btn" disabled={!tolOk} data-testid="compare-show">
          Show
        </button>
        {!tolOk ? <p className="w-full text-sm text-bad">Enter a positive number such as 1e-6.</p> : null}
        {loading ? <p className="text-sm text-muted" data-testid="compare-loading">Updating…</p> : null}
      </Form>
      <section className="card space-y-3 p-4" data-testid="compare-sources" aria-busy={loading || undefined}>
        <h2 className="font-medium">Where these points come from</h2>
        {views.map((v, i) => (
          <SourcesTable key={i} view={v} which={i === 0 ? "a" : "b"} query={q} />
        ))}
        {bOtherSource ? (
          <p className="text-sm text-warn" data-testid="b-other-source">
            The second commit has no runs of {result.a.sources.find((s) => s.key === result.a.source)?.suite ?? "that suite"} with these repeat settings: its timings come from another suite and are not comparable with the first commit's.
          </p>
        ) : null}
        <p className="text-xs text-muted">Timings of different suites or repeat settings are never mixed: one group is shown at a time; pick another in “Timings from”. Within a group, a case measured by several runs shows the newest.</p>
      </section>
      {result.suitesWithMeshes !== undefined && q.problem && result.a.points.length > 0 && result.a.maxMeshesPerScheme < 2 ? (
        <section className="card space-y-2 border-warn p-4" data-testid="no-order">
          <h2 className="font-medium">No convergence order can be fitted here</h2>
          <p className="text-sm">
            Each scheme was solved on a single mesh in these runs, and an order is the slope between at least two mesh sizes. The error shown is one mesh's error, not a rate.
          </p>
          {result.suitesWithMeshes.length > 0 ? (
            <p className="text-sm">
              {result.suitesWithMeshes.map((s, i) => (
                <span key={s.suite}>
                  {i > 0 ? ", " : ""}
                  <Link className="font-medium underline" to={`/run-suite?suite=${encodeURIComponent(s.suite)}`} data-run-suite={s.suite}>
                    run the {s.suite} suite
                  </Link>{" "}
                  ({s.meshesPerScheme} meshes per scheme)
                </span>
              ))}{" "}
              on this commit to fit one.
            </p>
          ) : (
            <p className="text-sm text-muted">No stored suite runs this problem on several meshes of one scheme; add it to a suite with two or more meshes.</p>
          )}
        </section>
      ) : null}
      <section className="card space-y-3 p-4" aria-busy={loading || undefined}>
        <div className={`grid gap-4 ${views.length === 2 ? "lg:grid-cols-2" : ""}`}>
          {views.map((v, i) => (
            <div key={i} className="space-y-2 overflow-x-auto" data-cheapest-for={i === 0 ? "a" : "b"}>
              <h2 className="font-medium">
                Cheapest setting meeting {q.tol.toExponential(0)} at <span className="num">{v.commit?.slice(0, 10) ?? "—"}</span>
              </h2>
              <CheapestTable rows={v.cheapest} tol={q.tol} points={v.points} />
            </div>
          ))}
        </div>
      </section>
      <div className={`grid gap-6 ${views.length === 2 ? "xl:grid-cols-2" : ""}`}>
        {views.map((v, i) => (
          <div key={i} className="min-w-0 space-y-3" data-compare-view={i === 0 ? "a" : "b"}>
            <h2 className="text-lg font-semibold">
              <span className="num">{v.commit?.slice(0, 10) ?? "no run"}</span> {v.commitSubject ? <span className="text-muted" data-ident>· {v.commitSubject}</span> : null}
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
