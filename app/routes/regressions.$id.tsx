import { useEffect, useRef } from "react";
import { data, Link, useFetcher } from "react-router";
import type { Route } from "./+types/regressions.$id";
import { SchemeChart, type ChartSeries } from "~/components/compare/SchemeChart";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { FormError } from "~/components/Field";
import { MemberCases, Sightings } from "~/components/regressions/GroupAndSightings";
import { getDb } from "~/db/client.server";
import { commitsBetween, getRegressionDetail, type SideCase } from "~/models/regressions.server";
import { requireUser } from "~/services/auth.server";
import { roleAtLeast } from "~/services/roles";
import { METRICS, TONE_CLASS, directionOf, kindLabel, metricAxisLabel, metricLabel, statusLabel, statusTone } from "~/vocabulary";
import { DemoBadge } from "~/components/Caution";
import { cachedByDataAsync, PROBLEM_FILES_MAX_AGE_MS } from "~/services/data-cache.server";
import { AbPanel } from "~/components/regressions/AbPanel";
import { abChecksOfRegression } from "~/models/ab-checks.server";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.detail.regression.caseKey ?? "Regression"} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const id = Number(params.id);
  const db = getDb();
  // once per data version (any write, a sign-in included, recomputes it): app/services/data-cache.server.ts
  const detail = Number.isInteger(id) ? await cachedByDataAsync(db, "regression-detail", `${id}:${user.id}`, () => getRegressionDetail(db, id, user.id), PROBLEM_FILES_MAX_AGE_MS, (d) => !d?.before?.trajectory?.referenceBusy && !d?.after?.trajectory?.referenceBusy) : null;
  if (!detail) throw data({ message: "No such regression." }, { status: 404 });
  // Demo commits are invented: asking git about them only costs time (100–600 ms measured).
  const between = detail.regression.isDemo ? { commits: [], note: "Demo data: these commits are invented and are in no repository." } : await commitsBetween(detail.before?.commitHash ?? null, detail.regression.commitHash);
  return { detail, commits: between.commits, commitsNote: between.note, canTriage: roleAtLeast(user.role, "engineer"), abChecks: abChecksOfRegression(db, id) };
}

/** Theme colours (app/app.css): baseline, flagged run and the reference. */
const BEFORE = "var(--aw-focus)";
const AFTER = "var(--aw-bad)";
const REF = "var(--aw-muted)";
const num = (v: number | null | undefined) => (v === null || v === undefined ? "—" : Number.isInteger(v) ? String(v) : Math.abs(v) < 1e-3 || Math.abs(v) >= 1e4 ? v.toExponential(3) : v.toPrecision(5));
const when = (ms: number) => new Date(ms).toISOString().replace("T", " ").slice(0, 19);

type ApiResult = { ok?: boolean; errors?: Record<string, string>; error?: string };

function useApi(id: number) {
  const f = useFetcher<ApiResult>();
  return { f, action: `/api/regressions/${id}` };
}

/** Half-height of a median mark around its strip row (rows sit at y = 1 and y = 2). */
const MEDIAN_HALF = 0.35;

/**
 * One-dimensional strip of solve times in ms: baseline samples on row 1, flagged samples on
 * row 2, each row's median (the stored medianSeconds) marked by a short vertical dashed line.
 * The time axis is logarithmic, so that a slowdown by a factor r is the same shift log10 r
 * wherever the samples sit.
 */
function SamplesPlot({ before, after }: { before: SideCase | null; after: SideCase | null }) {
  const series: ChartSeries[] = [];
  const rows: [SideCase | null, string, string, string, number][] = [
    [before, "before", "baseline", BEFORE, 1],
    [after, "after", "flagged", AFTER, 2],
  ];
  for (const [c, name, word, colour, row] of rows) {
    if (!c?.samples.length) continue;
    series.push({ name, label: `${word} (${c.samples.length} samples)`, colour, points: c.samples.map((s) => ({ x: s * 1000, y: row })) });
    if (c.medianSeconds !== null && Number.isFinite(c.medianSeconds)) {
      const m = c.medianSeconds * 1000;
      series.push({
        name: `${name}-median`,
        label: `${word} median ${num(m)} ms`,
        colour,
        style: "guide",
        points: [
          { x: m, y: row - MEDIAN_HALF },
          { x: m, y: row + MEDIAN_HALF },
        ],
      });
    }
  }
  if (!series.length) return <p className="text-sm text-muted">No timing samples recorded.</p>;
  return (
    <SchemeChart
      series={series}
      title="Solve-time samples, baseline and flagged"
      xLabel="solve time (ms)"
      yLabel="run"
      logX
      yDomain={[0.5, 2.5]}
      yTicks={[
        { at: 1, label: "baseline" },
        { at: 2, label: "flagged" },
      ]}
      yAxisWidth={76}
      width={560}
      height={180}
      testId="timing-samples"
    />
  );
}

function TrajectoryPlots({ before, after }: { before: SideCase | null; after: SideCase | null }) {
  const tr = after?.trajectory ?? before?.trajectory;
  if (!tr) return <p className="text-sm text-muted">No trajectories recorded.</p>;
  const names = [...tr.stateNames.map((n) => ({ n, kind: "states" as const })), ...tr.controlNames.map((n) => ({ n, kind: "controls" as const }))];
  const pts = (s: { t: number[]; columns: Record<string, number[]> } | null | undefined, n: string) => (s?.columns[n] ? s.t.map((t, i) => ({ x: t, y: s.columns[n]![i]! })) : []);
  return (
    <div className="flex flex-wrap gap-3" data-testid="trajectories">
      {names.map(({ n, kind }) => {
        const series: ChartSeries[] = [
          { name: "reference", colour: REF, style: "guide", points: pts(tr.reference, n) },
          { name: "baseline", colour: BEFORE, style: "line", points: pts(before?.trajectory?.solution[kind], n) },
          { name: "flagged", colour: AFTER, style: "line", points: pts(after?.trajectory?.solution[kind], n) },
        ];
        return (
          <div key={`${kind}-${n}`} className="card w-full max-w-[25rem] p-2">
            <p className="text-sm font-medium">{n}</p>
            <SchemeChart width={380} height={220} title={`${n} against t: reference, baseline and flagged`} xLabel="t" yLabel={n} series={series.filter((s) => s.points.length > 0)} />
          </div>
        );
      })}
      {tr.referenceNote ? <p className="w-full text-xs text-muted">{tr.referenceNote}</p> : null}
    </div>
  );
}

function Triage({ id, detail }: { id: number; detail: Route.ComponentProps["loaderData"]["detail"] }) {
  const ack = useApi(id);
  const assign = useApi(id);
  const expected = useApi(id);
  const fixed = useApi(id);
  const reopen = useApi(id);
  const r = detail.regression;
  return (
    <section className="card space-y-4 p-4" data-testid="triage">
      <h2 className="text-lg font-semibold">Triage</h2>
      <div className="flex flex-wrap gap-2">
        <ack.f.Form method="post" action={ack.action}>
          <input type="hidden" name="intent" value="acknowledge" />
          <button className="btn-quiet" type="submit" disabled={r.status === "acknowledged" || ack.f.state !== "idle"} data-testid="acknowledge">
            Acknowledge
          </button>
        </ack.f.Form>
        {r.status !== "open" ? (
          <reopen.f.Form method="post" action={reopen.action}>
            <input type="hidden" name="intent" value="reopen" />
            <button className="btn-quiet" type="submit" disabled={reopen.f.state !== "idle"}>
              Reopen
            </button>
          </reopen.f.Form>
        ) : null}
      </div>
      <assign.f.Form method="post" action={assign.action} className="flex flex-wrap items-end gap-2">
        <input type="hidden" name="intent" value="assign" />
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Assignee</span>
          <select name="assigneeId" defaultValue={r.assigneeId ?? 0} className="input w-56" data-testid="assignee">
            <option value={0}>nobody</option>
            {detail.assignable.map((u) => (
              <option key={u.id} value={u.id}>
                {u.name}
              </option>
            ))}
          </select>
        </label>
        <button className="btn-quiet" type="submit" disabled={assign.f.state !== "idle"} data-testid="assign">
          Assign
        </button>
        {assign.f.data?.errors?.assigneeId ? <p className="text-sm text-bad">{assign.f.data.errors.assigneeId}</p> : null}
      </assign.f.Form>
      <expected.f.Form method="post" action={expected.action} className="flex flex-wrap items-end gap-2">
        <input type="hidden" name="intent" value="expected" />
        <label className="grow space-y-1 text-sm">
          <span className="block font-medium">Reason it is expected</span>
          <input name="reason" className="input" defaultValue={r.reason ?? ""} aria-invalid={expected.f.data?.errors?.reason ? true : undefined} data-testid="reason" />
        </label>
        <button className="btn-quiet" type="submit" disabled={expected.f.state !== "idle"} data-testid="mark-expected">
          Mark expected
        </button>
        {expected.f.data?.errors?.reason ? (
          <p className="w-full text-sm text-bad" data-field-error="reason">
            {expected.f.data.errors.reason}
          </p>
        ) : null}
      </expected.f.Form>
      <fixed.f.Form method="post" action={fixed.action} className="flex flex-wrap items-end gap-2">
        <input type="hidden" name="intent" value="fixed" />
        <label className="space-y-1 text-sm">
          <span className="block font-medium">Fixing commit</span>
          <input name="fixingCommit" className="input num w-80" defaultValue={r.fixingCommit ?? ""} data-testid="fixing-commit" />
        </label>
        <button className="btn-quiet" type="submit" disabled={fixed.f.state !== "idle"} data-testid="mark-fixed">
          Link fix
        </button>
        {fixed.f.data?.errors?.fixingCommit ? (
          <p className="w-full text-sm text-bad" data-field-error="fixingCommit">
            {fixed.f.data.errors.fixingCommit}
          </p>
        ) : null}
      </fixed.f.Form>
    </section>
  );
}

/** Beside a person's name: the API token an action was taken with, if any. */
function TokenNote({ name }: { name: string | null | undefined }) {
  return name ? <span data-token-note> (with API token “{name}”)</span> : null;
}

export default function RegressionPage({ loaderData }: Route.ComponentProps) {
  const { detail, commits, commitsNote, canTriage, abChecks } = loaderData;
  const r = detail.regression;
  const { before, after } = detail;
  const comment = useApi(r.id);
  const sub = useApi(r.id);
  // a posted comment leaves the box empty (the list above now shows it)
  const commentForm = useRef<HTMLFormElement>(null);
  useEffect(() => {
    if (comment.f.state === "idle" && comment.f.data?.ok) commentForm.current?.reset();
  }, [comment.f.state, comment.f.data]);
  const rows: [string, (c: SideCase) => number | null | string][] = [
    [METRICS.status.label, (c) => statusLabel("case", c.status)],
    [METRICS.objective.label, (c) => c.objective],
    [METRICS.objectiveErrorRel.label, (c) => c.objectiveErrorRel],
    [METRICS.stateError.label, (c) => c.stateError],
    [METRICS.iterations.label, (c) => c.iterations],
    [metricAxisLabel("medianSeconds"), (c) => c.medianSeconds],
  ];
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-start justify-between gap-4">
        <div>
          <p className="text-sm text-muted">
            <Link to="/regressions" className="hover:underline">
              Regressions
            </Link>{" "}
            / {r.id}
          </p>
          <h1 className="num flex flex-wrap items-center gap-2 text-2xl font-semibold tracking-tight">
            {r.caseKey} <DemoBadge show={r.isDemo} />
          </h1>
          <p className={TONE_CLASS[directionOf(r.direction).tone]}>
            {directionOf(r.direction).symbol} {kindLabel(r.kind)} {directionOf(r.direction).label} in {metricLabel(r.metric).toLowerCase()} · <span data-testid="regression-status">{statusLabel("regression", r.status)}</span>
            {r.assignee ? ` · assigned to ${r.assignee}` : ""}
            {abChecks[0] ? <> · <span className={statusTone("ab", abChecks[0].state)} data-testid="ab-badge">{statusLabel("ab", abChecks[0].state)}</span></> : null}
          </p>
          {r.reason ? <p className="text-sm text-muted">Expected: {r.reason}</p> : null}
          {r.fixingCommit ? <p className="num text-sm text-muted">Fixed by {r.fixingCommit}</p> : null}
        </div>
        <div className="flex gap-2">
          <Link className="btn-quiet" to={`/problems/${r.problemId}`}>
            Problem
          </Link>
          <sub.f.Form method="post" action={sub.action}>
            <input type="hidden" name="intent" value={detail.subscribed ? "unsubscribe" : "subscribe"} />
            <button className="btn-quiet" type="submit" data-testid="subscribe" disabled={sub.f.state !== "idle"}>
              {detail.subscribed ? `Stop e-mail about ${r.problemId}` : `E-mail me about ${r.problemId}`}
            </button>
          </sub.f.Form>
        </div>
      </div>

      <MemberCases members={detail.members} />
      <AbPanel id={r.id} checks={abChecks} canStart={canTriage} speed={r.kind === "speed" || r.kind === "drift"} isDemo={r.isDemo} />
      <Sightings sightings={detail.sightings} />

      <section className="card overflow-x-auto p-4" data-testid="evidence">
        <h2 className="mb-2 text-lg font-semibold">Before and after</h2>
        <p className="mb-3 text-sm">
          {metricLabel(r.metric)}: <span className="num">{num(r.before)}</span> → <span className="num">{num(r.after)}</span>, ratio <span className="num" data-testid="ratio">{r.ratio === null ? "—" : r.ratio.toFixed(3)}</span>
          {r.pValue !== null ? <>, p = <span className="num">{r.pValue.toExponential(2)}</span></> : null}
          {r.ciLow !== null && r.ciHigh !== null ? (
            <>
              , interval [<span className="num">{r.ciLow.toPrecision(4)}</span>, <span className="num">{r.ciHigh.toPrecision(4)}</span>]
            </>
          ) : null}
        </p>
        <table className="text-sm">
          <thead className="text-muted">
            <tr>
              <th className="pr-6 text-left font-medium" />
              <th className="pr-6 text-left font-medium">baseline {before ? <Link className="num hover:underline" to={`/cases/${before.caseId}`}>{before.commitHash.slice(0, 10)}</Link> : "—"}</th>
              <th className="text-left font-medium">flagged {after ? <Link className="num hover:underline" to={`/cases/${after.caseId}`}>{after.commitHash.slice(0, 10)}</Link> : "—"}</th>
            </tr>
          </thead>
          <tbody>
            {rows.map(([label, get]) => (
              <tr key={label}>
                <td className="pr-6 text-muted">{label}</td>
                <td className="num pr-6">{before ? (typeof get(before) === "string" ? get(before) : num(get(before) as number | null)) : "—"}</td>
                <td className="num">{after ? (typeof get(after) === "string" ? get(after) : num(get(after) as number | null)) : "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <section className="card p-4">
        <h2 className="mb-2 text-lg font-semibold">Timing samples</h2>
        <SamplesPlot before={before} after={after} />
      </section>

      <section className="space-y-2">
        <h2 className="text-lg font-semibold">Trajectories over the reference</h2>
        <TrajectoryPlots before={before} after={after} />
      </section>

      <section className="card p-4" data-testid="commits">
        <h2 className="mb-2 text-lg font-semibold">Commits between baseline and flagged commit</h2>
        {commitsNote ? <p className="text-sm text-muted">{commitsNote}</p> : null}
        <ul className="space-y-3">
          {commits.map((c) => (
            <li key={c.hash} data-commit={c.hash}>
              <Link to={`/commits/${c.hash}`} className="font-medium hover:underline" data-ident>
                {c.subject}
              </Link>
              <span className="num block text-xs text-muted">
                {c.hash.slice(0, 10)} · {c.author} · {c.date}
              </span>
              <ul className="num text-xs">
                {c.files.slice(0, 20).map((f) => (
                  <li key={f.path}>
                    <span className="text-muted">{f.status}</span> {f.path}
                  </li>
                ))}
                {c.files.length > 20 ? <li className="text-muted">… {c.files.length - 20} more</li> : null}
              </ul>
            </li>
          ))}
        </ul>
      </section>

      {canTriage ? <Triage id={r.id} detail={detail} /> : null}

      <section className="card p-4" data-testid="history">
        <h2 className="mb-2 text-lg font-semibold">History</h2>
        <ol className="space-y-1 text-sm">
          {detail.events.map((e) => (
            <li key={e.id} data-event={e.toStatus ?? ""}>
              <span className="num text-muted">{when(e.at)}</span> · {e.user ?? "Arcwatch"}<TokenNote name={e.token} /> · {e.fromStatus ?? "—"} → {e.toStatus ?? "—"}
              {e.note ? <span className="block pl-4">{e.note}</span> : null}
            </li>
          ))}
        </ol>
      </section>

      <section className="card space-y-3 p-4" data-testid="comments">
        <h2 className="text-lg font-semibold">Comments</h2>
        <ul className="space-y-2 text-sm">
          {detail.comments.map((c) => (
            <li key={c.id}>
              <span className="text-muted">
                {c.user}<TokenNote name={c.token} /> · <span className="num">{when(c.at)}</span>
              </span>
              <p className="whitespace-pre-wrap">{c.body}</p>
            </li>
          ))}
        </ul>
        <comment.f.Form ref={commentForm} method="post" action={comment.action} className="space-y-2">
          <input type="hidden" name="intent" value="comment" />
          <textarea name="body" className="input min-h-20" aria-label="Comment" />
          {comment.f.data?.errors?.body ? <FormError message={comment.f.data.errors.body} /> : null}
          <button className="btn-quiet" type="submit" disabled={comment.f.state !== "idle"}>
            Comment
          </button>
        </comment.f.Form>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
