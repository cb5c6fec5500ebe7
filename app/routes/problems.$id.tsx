import { data, Link, redirect, useSearchParams } from "react-router";
import { ProblemCheckPanel, SuitesPanel } from "~/components/problems/SuitesPanel";
import { useAutoRefresh } from "~/components/useAutoRefresh";
import { enqueueJob } from "~/models/jobs.server";
import { webProblemLibrary } from "~/models/library.server";
import { latestProblemCheck } from "~/models/problem-checks.server";
import { recordSuiteChange, suiteChangesOfProblem, suiteFilesOf, suitesOfProblem } from "~/models/suite-changes.server";
import { PROBLEM_CHECK_MESHES, problemSuiteName } from "~/runs/suite-changes";
import { checkBenchJob } from "~/services/job-check.server";
import { Notice } from "~/components/Field";
import type { Route } from "./+types/problems.$id";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { formatError, SchemeStateCell } from "~/components/problems/SchemeState";
import { Tex } from "~/components/Tex";
import { getDb } from "~/db/client.server";
import { getProblemDetail } from "~/models/problems.server";
import { SCHEMES } from "~/components/problems/schemes";
import { requireRole, requireUser } from "~/services/auth.server";
import { roleAtLeast } from "~/services/roles";
import { busyPage, SolverPoolBusy } from "~/services/solver-pool.server";

/** A refusal's Retry-After (solver threads busy) reaches the browser with the error page. */
export const headers: Route.HeadersFunction = ({ errorHeaders }) => {
  const retry = errorHeaders?.get("Retry-After");
  return retry ? { "Retry-After": retry } : new Headers();
};

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.detail.title ?? "Problem"} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const db = getDb();
  let r;
  try {
    // compiled on a solver thread and kept by content (app/services/problem-views.server.ts)
    r = await getProblemDetail(db, params.id);
  } catch (err) {
    if (err instanceof SolverPoolBusy) throw busyPage(err);
    throw err;
  }
  if (!r.ok) throw data({ message: r.message }, { status: r.status });
  const engineer = roleAtLeast(user.role, "engineer");
  return {
    detail: r.detail,
    canEdit: engineer && r.detail.origin === "uploaded",
    engineer,
    // the server's checkout suites, with the browser's changes (app/models/suite-changes.server.ts)
    suites: suitesOfProblem(db, process.cwd(), params.id, webProblemLibrary()),
    suiteHistory: suiteChangesOfProblem(db, params.id),
    check: latestProblemCheck(db, params.id),
  };
}

/**
 * Engineers: add the problem to a suite or take a browser-added problem out again (a versioned
 * suite change with who and when), or queue "Run it now" (a job of the one-problem suite).
 */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "engineer");
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const id = params.id;
  const db = getDb();
  if (webProblemLibrary().rootIndexOf(id) < 0) throw data({ message: `No problem "${id}".` }, { status: 404 });
  if (intent === "add-to-suite" || intent === "remove-from-suite") {
    const suite = String(form.get("suite") ?? "");
    const known = suiteFilesOf(process.cwd()).map((s) => s.name);
    if (!known.includes(suite)) return data({ suiteError: `suite: "${suite}" is not a suite of this checkout (it has: ${known.join(", ") || "none"}).` }, { status: 400 });
    const view = suitesOfProblem(db, process.cwd(), id, webProblemLibrary()).find((s) => s.name === suite)!;
    if (view.error) return data({ suiteError: `suite: ${view.error}` }, { status: 400 });
    if (intent === "add-to-suite" && view.membership.included) return data({ suiteError: `suite: ${suite} already runs ${id}.` }, { status: 409 });
    if (intent === "remove-from-suite" && view.membership.via !== "change") return data({ suiteError: `suite: only a problem added here can be taken out here; ${suite} selects ${id} in its file.` }, { status: 409 });
    recordSuiteChange(db, { suiteName: suite, action: intent === "add-to-suite" ? "add" : "remove", problemId: id, user, note: String(form.get("note") ?? "").trim() });
    return redirect(`/problems/${encodeURIComponent(id)}`);
  }
  if (intent === "run-now") {
    const checked = await checkBenchJob({ suite: problemSuiteName(id), problem: id });
    if (!checked.ok) return data({ checkError: `${checked.field}: ${checked.message}` }, { status: 400 });
    enqueueJob(db, { kind: "bench", payload: checked.payload }, user.id > 0 ? user.id : null);
    return redirect(`/problems/${encodeURIComponent(id)}#check-title`);
  }
  return data({ suiteError: `Unknown action "${intent}".` }, { status: 400 });
}

const bound = (v: number | null) => (v === null ? "—" : String(v));

/** A number in TeX: 1e-6 → 1 \times 10^{-6}. */
function texNumber(v: number): string {
  const s = String(v);
  const m = /^(-?[\d.]+)e([+-]?\d+)$/.exec(s);
  return m ? `${m[1]} \\times 10^{${Number(m[2])}}` : s;
}

/** One end condition as an equation or inequality. */
function endConditionTex(r: { tex: string; lower: number | null; upper: number | null }): string {
  if (r.lower !== null && r.upper !== null && r.lower === r.upper) return `${r.tex} = ${texNumber(r.lower)}`;
  if (r.lower !== null && r.upper !== null) return `${texNumber(r.lower)} \\le ${r.tex} \\le ${texNumber(r.upper)}`;
  if (r.lower !== null) return `${r.tex} \\ge ${texNumber(r.lower)}`;
  if (r.upper !== null) return `${r.tex} \\le ${texNumber(r.upper)}`;
  return `${r.tex} \\text{ free}`;
}
const when = (ms: number) => (ms ? new Date(ms).toISOString().replace("T", " ").slice(0, 16) : "not yet saved");

const CHECK_MESHES = `${PROBLEM_CHECK_MESHES.local.join(" and ")} intervals; LGR ${PROBLEM_CHECK_MESHES.lgr.map((n) => `${n}×${PROBLEM_CHECK_MESHES.lgrDegree}`).join(" and ")}`;

export default function ProblemPage({ loaderData, actionData }: Route.ComponentProps) {
  const { detail: d, canEdit, engineer, suites, suiteHistory, check } = loaderData;
  const running = check && (check.job.status === "queued" || check.job.status === "running");
  useAutoRefresh(running ? 1500 : null);
  const errors = (actionData ?? {}) as { suiteError?: string; checkError?: string };
  const including = suites.filter((s) => s.membership.included).map((s) => s.name);
  const saved = useSearchParams()[0].get("saved");
  const tex = d.tex;
  const dyn = d.stateNames.filter((s) => tex[`dynamics.${s}`] !== undefined);
  // The left-hand sides use the same TeX names as the right-hand sides (engine/expr/tex.ts).
  const nameTex = (n: string) => d.names[n] ?? `\\mathrm{${n}}`;
  const inter = Object.keys(tex).filter((k) => k.startsWith("intermediates."));
  const objective = [tex["objective.terminal"], tex["objective.running"] ? `\\int_{t_0}^{t_f} ${tex["objective.running"]}\\,dt` : undefined].filter(Boolean).join(" + ");
  return (
    <div className="space-y-8">
      <div className="flex flex-wrap items-start justify-between gap-4">
        <div className="max-w-3xl space-y-2">
          <p className="text-sm text-muted">
            <Link to="/problems" className="hover:underline">
              Problem library
            </Link>{" "}
            / <span className="num">{d.id}</span>
          </p>
          <h1 className="text-3xl font-semibold tracking-tight">{d.title}</h1>
          <p className="text-muted">{d.description}</p>
          <div className="flex flex-wrap gap-1">
            {d.tags.map((t) => (
              <Link key={t} to={`/problems?tag=${encodeURIComponent(t)}`} className="rounded bg-raised px-1.5 py-0.5 text-xs">
                {t}
              </Link>
            ))}
          </div>
        </div>
        <div className="flex gap-2">
          <Link className="btn-quiet" to={`/compare?problem=${encodeURIComponent(d.id)}`}>
            Compare schemes
          </Link>
          {canEdit ? (
            <Link className="btn" to={`/problems/${d.id}/edit`}>
              Edit (new version)
            </Link>
          ) : null}
        </div>
      </div>

      <Notice message={saved ? `Saved: version ${saved}. ${including.length ? `Suite(s) ${including.join(", ")} run it from their next run on.` : "No suite selects it yet: add it to one below, or run it now."}` : null} />
      <section className="card space-y-3 overflow-x-auto p-5" data-testid="equations">
        <h2 className="text-lg font-semibold">Equations</h2>
        <p>
          <Tex tex={`\\${d.sense === "max" ? "max" : "min"}\\; J = ${objective || "0"}`} display />
        </p>
        {inter.map((k) => (
          <p key={k}>
            <Tex tex={`${nameTex(k.slice("intermediates.".length))} = ${tex[k]}`} display />
          </p>
        ))}
        {dyn.map((s) => (
          <p key={s}>
            <Tex tex={`\\dot{${nameTex(s)}} = ${tex[`dynamics.${s}`]}`} display />
          </p>
        ))}
        {(["initial", "final", "endpoint"] as const).map((kind) => {
          const rows = d.endConditions.filter((r) => r.kind === kind);
          if (rows.length === 0) return null;
          return (
            <div key={kind} data-testid={`end-${kind}`}>
              <h3 className="text-sm font-medium text-muted">{kind === "initial" ? "Initial conditions" : kind === "final" ? "Final conditions" : "Endpoint constraints"}</h3>
              <div className="flex flex-wrap gap-x-8">
                {rows.map((r) => (
                  <span key={r.name} data-end-condition={r.name}>
                    <Tex tex={endConditionTex(r)} display />
                  </span>
                ))}
              </div>
            </div>
          );
        })}
        <p className="text-sm text-muted">
          Horizon: t₀ = {d.horizon.t0},{" "}
          {d.horizon.kind === "fixed" ? `t_f = ${d.horizon.tf} (fixed)` : `t_f free in [${d.horizon.lower}, ${d.horizon.upper}]`}
        </p>
      </section>

      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card p-5">
          <h2 className="mb-3 text-lg font-semibold">Constants</h2>
          {d.constants.length === 0 ? (
            <p className="text-muted">None.</p>
          ) : (
            <table className="text-sm" data-testid="constants">
              <tbody>
                {d.constants.map((c) => (
                  <tr key={c.name}>
                    <td className="num pr-6">{c.name}</td>
                    <td className="num">{c.value}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </section>
        <section className="card p-5">
          <h2 className="mb-3 text-lg font-semibold">Bounds</h2>
          <table className="w-full text-sm" data-testid="bounds">
            <thead className="text-muted">
              <tr>
                <th className="text-left font-medium">name</th>
                <th className="text-left font-medium">kind</th>
                <th className="text-right font-medium">lower</th>
                <th className="text-right font-medium">upper</th>
              </tr>
            </thead>
            <tbody>
              {d.bounds.map((b) => (
                <tr key={`${b.kind}-${b.name}`}>
                  <td className="num">
                    {b.name}
                    {b.tex ? (
                      <span className="ml-2">
                        <Tex tex={b.tex} />
                      </span>
                    ) : null}
                  </td>
                  <td className="text-muted">
                    {b.kind}
                    {b.unit ? ` (${b.unit})` : ""}
                  </td>
                  <td className="num text-right">{bound(b.lower)}</td>
                  <td className="num text-right">{bound(b.upper)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      </div>

      <section className="card space-y-3 p-5" data-testid="references">
        <h2 className="text-lg font-semibold">References</h2>
        <ul className="space-y-1 text-sm">
          {d.reference.objective ? (
            <li>
              objective J* = <span className="num">{d.reference.objective.value}</span> ± <span className="num">{d.reference.objective.tolerance}</span>
            </li>
          ) : null}
          {d.reference.finalTime ? (
            <li>
              final time t_f* = <span className="num">{d.reference.finalTime.value}</span> ± <span className="num">{d.reference.finalTime.tolerance}</span>
            </li>
          ) : null}
          {d.reference.switchingTimes ? <li>switching times: <span className="num">{d.reference.switchingTimes.join(", ")}</span></li> : null}
          {d.reference.arcs ? <li>arcs: {d.reference.arcs.join(" → ")}</li> : null}
          {d.reference.trajectoryPoints ? <li>trajectory: {d.reference.trajectoryPoints} points</li> : null}
        </ul>
        <h3 className="font-medium">Provenance</h3>
        <ul className="space-y-1 text-sm">
          {d.provenance.map((p) => (
            <li key={p.quantity} data-provenance={p.quantity}>
              <span className="text-muted">{p.quantity}:</span> <strong>{p.kind}</strong>
              {p.text ? ` — ${p.text}` : ""}
            </li>
          ))}
        </ul>
        {d.warnings.length ? (
          <details className="text-sm text-muted">
            <summary>{d.warnings.length} compiler warning(s)</summary>
            <ul>
              {d.warnings.map((w) => (
                <li key={w}>{w}</li>
              ))}
            </ul>
          </details>
        ) : null}
      </section>

      <div className="grid gap-6 lg:grid-cols-2">
        <SuitesPanel suites={suites} history={suiteHistory} canChange={engineer} error={errors.suiteError} />
        <div className="space-y-2">
          <ProblemCheckPanel check={check} canRun={engineer} meshes={CHECK_MESHES} />
          {errors.checkError ? <p className="text-sm text-bad" data-field-error="run-now">{errors.checkError}</p> : null}
        </div>
      </div>

      <section className="card overflow-x-auto p-5">
        <h2 className="mb-3 text-lg font-semibold">Best result per scheme on main</h2>
        <table className="w-full text-left text-sm" data-testid="best-results">
          <thead className="text-muted">
            <tr>
              <th className="pr-4 font-medium">scheme</th>
              <th className="pr-4 font-medium">latest run</th>
              <th className="pr-4 font-medium">best mesh</th>
              <th className="pr-4 text-right font-medium">rel. objective error</th>
              <th className="pr-4 text-right font-medium">median time</th>
              <th className="pl-4 font-medium">commit</th>
            </tr>
          </thead>
          <tbody>
            {SCHEMES.map((s) => {
              const b = d.best.find((x) => x.scheme === s);
              return (
                <tr key={s} className="border-t border-line" data-best={s}>
                  <td className="py-2">{s}</td>
                  <td className="py-2">
                    <SchemeStateCell state={d.states[s]} />
                  </td>
                  <td className="num py-2">{b ? `${b.intervals}${b.degree ? `×${b.degree}` : ""}` : "—"}</td>
                  <td className="num py-2 text-right">{b ? formatError(b.errorRel) : "—"}</td>
                  <td className="num py-2 pr-4 text-right">{b?.medianSeconds != null ? `${(b.medianSeconds * 1000).toFixed(1)} ms` : "—"}</td>
                  <td className="num py-2 pl-4">{b ? <Link to={`/cases/${b.caseId}`} className="hover:underline">{b.commitHash.slice(0, 10)}</Link> : ""}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </section>

      <section className="card p-5">
        <h2 className="mb-3 text-lg font-semibold">Versions</h2>
        <table className="text-sm" data-testid="versions">
          <tbody>
            {d.versions.map((v) => (
              <tr key={v.contentHash} data-version={v.contentHash}>
                <td className="num pr-6">{v.contentHash.slice(0, 12)}</td>
                <td className="num pr-6 text-muted">{when(v.createdAt)}</td>
                <td className="pr-6">{v.results} result(s)</td>
                <td className="text-muted">{v.contentHash === d.versionHash ? "current" : ""}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
