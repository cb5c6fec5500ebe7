import { useEffect } from "react";
import { data, Form, Link, redirect, useFetcher, useNavigation, useRevalidator } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/run-suite";
import { FlightCaution, fmtDate, fmtSeconds } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { FormError } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { benchJobPayload, enqueueJob, jobView, listJobs, type JobView } from "~/models/jobs.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { fieldErrors, type FieldErrors } from "~/services/forms.server";
import { listBranches, listCommits, listSuitesAt, mergeBase, resolveRef } from "~/services/git.server";
import { checkAbJob, queueAbJob } from "~/services/ab-confirm.server";
import { AbVerdict } from "~/components/runs/AbVerdict";
import { roleAtLeast } from "~/services/roles";
import { DIRECTION, statusLabel, statusTone } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Run a suite · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const url = new URL(request.url);
  const db = getDb();
  let branches: Awaited<ReturnType<typeof listBranches>> = [];
  let gitError: string | null = null;
  try {
    branches = await listBranches();
  } catch (err) {
    gitError = `The repository could not be read (${(err as Error).message}). Set ARCWATCH_REPO to the solver's git repository.`;
  }
  const ref = url.searchParams.get("ref") || branches.find((b) => b.name === "main")?.name || branches[0]?.name || "";
  const commits = ref ? await listCommits(ref, 20).catch(() => []) : [];
  const suites = ref ? await listSuitesAt(ref) : [];
  // Where the branch leaves main (its merge base), marked in its commit list; none for main itself.
  const forkPoint = ref && ref !== "main" && branches.some((b) => b.name === "main") ? await mergeBase(ref, "main") : null;
  const jobId = Number(url.searchParams.get("job"));
  const job = Number.isInteger(jobId) && jobId > 0 ? jobView(db, jobId) : null;
  const jobs = listJobs(db, 15).map((j) => ({ id: j.id, kind: j.kind, status: j.status, suite: String((j.payloadJson as { suite?: unknown })?.suite ?? ""), ref: String((j.payloadJson as { ref?: unknown })?.ref ?? ""), createdAt: j.createdAt.getTime() }));
  // Links from other pages (compare, commit page) preselect a suite and a commit.
  const wantSuite = url.searchParams.get("suite") ?? "";
  const wantCommit = url.searchParams.get("commit") ?? "";
  return { canStart: roleAtLeast(user.role, "engineer"), branches, commits, suites, ref, forkPoint, job, jobs, gitError, wantSuite, wantCommit: /^[0-9a-f]{7,40}$/.test(wantCommit) ? wantCommit : "" };
}

const startSchema = z.object({
  ref: z.string().trim().min(1, "Pick a branch.").max(200),
  commit: z.string().trim().regex(/^([0-9a-f]{7,40})?$/, "A commit is 7 to 40 hexadecimal characters.").optional(),
  suite: benchJobPayload.shape.suite,
});
type StartField = "ref" | "commit" | "suite";

/** Engineers queue a bench job for a branch (its tip) or one of its commits. */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "engineer");
  const form = await request.formData();
  if (form.get("intent") === "ab-branch") return branchAb(form, user.id);
  const values = { ref: String(form.get("ref") ?? ""), commit: String(form.get("commit") ?? ""), suite: String(form.get("suite") ?? "") };
  const parsed = startSchema.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors<StartField>(parsed.error) as FieldErrors<StartField>, values }, { status: 400 });
  const commit = await resolveRef(parsed.data.commit || parsed.data.ref);
  if (!commit) return data({ errors: { [parsed.data.commit ? "commit" : "ref"]: `${parsed.data.commit || parsed.data.ref} is not in the repository.` } as FieldErrors<StartField>, values }, { status: 400 });
  const suites = await listSuitesAt(commit);
  if (!suites.includes(parsed.data.suite)) return data({ errors: { suite: `Commit ${commit.slice(0, 10)} has no suite "${parsed.data.suite}" (it has: ${suites.join(", ") || "none"}).` } as FieldErrors<StartField>, values }, { status: 400 });
  const job = enqueueJob(getDb(), { kind: "bench", payload: { suite: parsed.data.suite, commit, ref: parsed.data.ref } }, user.id);
  return redirect(`/run-suite?ref=${encodeURIComponent(parsed.data.ref)}&job=${job.id}`);
}

/** The branch's tip (B) against where it leaves main (A), every case of the suite, as an "ab" job. */
async function branchAb(form: FormData, userId: number) {
  const ref = String(form.get("ref") ?? "");
  const values = { ref, commit: "", suite: String(form.get("suite") ?? "") };
  const err = (field: StartField, message: string) => data({ errors: { [field]: message } as FieldErrors<StartField>, values }, { status: 400 });
  const tip = await resolveRef(ref);
  if (!tip) return err("ref", `${ref} is not a branch of the repository.`);
  const base = await mergeBase(ref, "main");
  if (!base) return err("ref", `${ref} shares no history with main.`);
  if (base === tip) return err("ref", `${ref} has no commits of its own beyond main: there is nothing to compare.`);
  const checked = await checkAbJob(getDb(), { base, head: tip, suite: values.suite });
  if (!checked.ok) return err(checked.field === "suite" || checked.field === "cases" ? "suite" : "ref", checked.message);
  const { job } = queueAbJob(getDb(), checked.payload, userId > 0 ? userId : null);
  return redirect(`/run-suite?ref=${encodeURIComponent(ref)}&job=${job.id}`);
}

const ACTIVE = new Set(["queued", "running"]);

function JobPanel({ initial, canCancel }: { initial: JobView; canCancel: boolean }) {
  const poll = useFetcher<{ job: JobView }>();
  const cancel = useFetcher<{ job?: JobView; error?: string }>();
  const job = cancel.data?.job ?? poll.data?.job ?? initial;
  const active = ACTIVE.has(job.status);
  const revalidator = useRevalidator();
  const wasActive = ACTIVE.has(initial.status);
  useEffect(() => {
    // Refresh the page's job list once the job ends.
    if (wasActive && !active) void revalidator.revalidate();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [active]);
  useEffect(() => {
    if (!active) return;
    const t = setInterval(() => {
      if (poll.state === "idle") poll.load(`/api/jobs/${initial.id}`);
    }, 1000);
    return () => clearInterval(t);
  }, [active, initial.id, poll]);
  const p = job.progress;
  const pct = p && p.total ? Math.round((100 * p.done) / p.total) : 0;
  return (
    <section className="card space-y-3 p-5" aria-labelledby="job-title" data-testid="job-panel" data-status={job.status}>
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h2 id="job-title" className="text-xl font-semibold">
          {job.ab ? (
            <>Job {job.id}: interleaved A/B, suite {job.suite}, <code className="num text-base">{job.ab.head.slice(0, 10)}</code> against <code className="num text-base">{job.ab.base.slice(0, 10)}</code></>
          ) : (
            <>Job {job.id}: suite {job.suite} on {job.ref ?? "?"} <code className="num text-base">{job.commit?.slice(0, 10)}</code></>
          )}
        </h2>
        <span className={`font-semibold ${job.status === "done" ? "text-good" : job.status === "failed" || job.status === "died" ? "text-bad" : "text-accent"}`} data-testid="job-status" aria-live="polite">
          {statusLabel("job", job.status)}
        </span>
      </div>
      {active || p ? (
        <div className="space-y-1">
          <div className="h-3 w-full overflow-hidden rounded bg-raised" role="progressbar" aria-valuemin={0} aria-valuemax={p?.total ?? 0} aria-valuenow={p?.done ?? 0} aria-label="Cases done">
            <div className="h-full bg-accent transition-all" style={{ width: `${pct}%` }} />
          </div>
          <p className="num text-sm text-muted" data-testid="job-progress">
            {job.status === "queued" ? "waiting for the machine (one run at a time)" : p?.phase === "checkout" ? (job.ab ? "checking both commits out into their own worktrees…" : "checking the commit out into its own worktree…") : `${p?.done ?? 0}/${p?.total ?? "?"} ${job.ab ? "trials" : "cases"}`}
            {p?.current && active ? ` · now ${p.current}` : ""}
            {p && active && p.etaSeconds !== null ? ` · about ${fmtSeconds(p.etaSeconds)} left` : ""}
            {p ? ` · elapsed ${fmtSeconds(p.elapsedSeconds)}` : ""}
          </p>
        </div>
      ) : null}
      {job.error ? <p className="text-sm text-bad">{job.error}</p> : null}
      {job.ab ? <AbVerdict check={job.ab} jobLink={false} /> : null}
      {job.found ? (
        <p className="text-sm" data-testid="job-found">
          The run solved <strong className="num">{job.found.solved}</strong> of <span className="num">{job.found.cases}</span> cases and found{" "}
          <span className={job.found.regressions ? "font-semibold text-bad" : ""}>{DIRECTION.regression.symbol} {job.found.regressions} {DIRECTION.regression.label}(s)</span> and{" "}
          <span className={job.found.improvements ? "text-good" : ""}>{DIRECTION.improvement.symbol} {job.found.improvements} {DIRECTION.improvement.label}(s)</span>
          {job.found.regressions + job.found.improvements === 0 ? " against its baseline (or it had no baseline yet)" : ""}.
        </p>
      ) : null}
      <div className="flex flex-wrap gap-2">
        {job.runId ? <Link className="btn" to={`/runs/${job.runId}`} data-testid="job-run-link">Open the run</Link> : null}
        {canCancel && active ? (
          <cancel.Form method="post" action={`/api/jobs/${job.id}`}>
            <input type="hidden" name="intent" value="cancel" />
            <button type="submit" className="btn-quiet" data-testid="job-cancel" disabled={cancel.state !== "idle"}>{cancel.state !== "idle" ? "Cancelling…" : "Cancel"}</button>
          </cancel.Form>
        ) : null}
        {cancel.data?.error ? <FormError message={cancel.data.error} /> : null}
      </div>
      <details open={active}>
        <summary className="cursor-pointer text-sm font-medium">Log</summary>
        <pre className="mt-2 max-h-80 overflow-auto rounded bg-raised p-3 text-xs" data-testid="job-log">{job.log || "(nothing yet)"}</pre>
      </details>
    </section>
  );
}

export default function RunSuite({ loaderData, actionData }: Route.ComponentProps) {
  const { canStart, branches, commits, suites, ref, forkPoint, job, jobs, gitError, wantSuite, wantCommit } = loaderData;
  const forkAt = forkPoint ? commits.findIndex((c) => c.hash === forkPoint) : -1;
  const preCommit = commits.find((c) => wantCommit && c.hash.startsWith(wantCommit))?.hash ?? wantCommit;
  const errors = (actionData?.errors ?? {}) as FieldErrors<StartField>;
  const values = actionData?.values;
  const busy = useNavigation().state === "submitting";
  // the recent-jobs list follows the jobs' live status (the same rows the job panel polls)
  const live = useFetcher<{ jobs: { id: number; status: string }[] }>();
  const liveStatus = new Map((live.data?.jobs ?? []).map((j) => [j.id, j.status]));
  const statusOf = (j: { id: number; status: string }) => liveStatus.get(j.id) ?? j.status;
  const anyActive = jobs.some((j) => ACTIVE.has(statusOf(j)));
  useEffect(() => {
    if (!anyActive) return;
    const t = setInterval(() => {
      if (live.state === "idle") live.load("/api/jobs");
    }, 1000);
    return () => clearInterval(t);
  }, [anyActive, live]);
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Run a suite</h1>
        <p className="text-muted">Measure exactly one commit's code: the worker checks it out into its own git worktree and runs <code>npm run bench -- --suite …</code> there. One run at a time on this machine, so timings stay clean.</p>
      </div>
      <FlightCaution />
      {gitError ? <FormError message={gitError} /> : null}
      {job ? <JobPanel key={job.id} initial={job} canCancel={canStart} /> : null}
      {canStart ? (
        <section className="card space-y-4 p-5" aria-labelledby="start-title">
          <h2 id="start-title" className="text-xl font-semibold">Start</h2>
          <Form method="get" className="flex flex-wrap items-end gap-2" aria-label="Pick a branch">
            <label className="space-y-1 text-sm">
              <span className="font-medium">Branch</span>
              <select name="ref" defaultValue={ref} className="input" data-testid="ref-picker">
                {branches.map((b) => <option key={b.name} value={b.name}>{b.name} — {b.subject.slice(0, 60)} ({b.date.slice(0, 10)})</option>)}
              </select>
            </label>
            <button type="submit" className="btn-quiet">Show its commits and suites</button>
          </Form>
          <Form method="post" className="grid gap-3 md:grid-cols-3" aria-label="Start a run">
            <input type="hidden" name="ref" value={ref} />
            <label className="space-y-1 text-sm md:col-span-2">
              <span className="font-medium">Commit of {ref || "the branch"}</span>
              <select name="commit" data-testid="commit-picker" defaultValue={values?.commit ?? preCommit} className="input" aria-invalid={errors.commit ? true : undefined} aria-describedby={errors.commit ? "commit-error" : undefined}>
                <option value="">Tip of {ref}</option>
                {preCommit && !commits.some((c) => c.hash === preCommit) ? <option value={preCommit}>{preCommit.slice(0, 10)} (from the link)</option> : null}
                {commits.map((c) => <option key={c.hash} value={c.hash}>{c.hash.slice(0, 10)} {c.subject.slice(0, 70)} ({c.date.slice(0, 10)})</option>)}
              </select>
              {errors.commit ? <span id="commit-error" className="text-bad">{errors.commit}</span> : null}
              {errors.ref ? <span className="text-bad">{errors.ref}</span> : null}
            </label>
            <label className="space-y-1 text-sm">
              <span className="font-medium">Suite</span>
              <select name="suite" defaultValue={values?.suite ?? (suites.includes(wantSuite) ? wantSuite : suites.includes("quick") ? "quick" : suites[0])} className="input" data-testid="suite-picker" aria-invalid={errors.suite ? true : undefined} aria-describedby={errors.suite ? "suite-error" : undefined}>
                {suites.map((s) => <option key={s} value={s}>{s}</option>)}
              </select>
              {errors.suite ? <span id="suite-error" className="text-bad" data-field-error="suite">{errors.suite}</span> : null}
            </label>
            <div className="md:col-span-3">
              <button type="submit" className="btn" disabled={busy || !ref} data-testid="start-run">{busy ? "Queuing…" : "Start the run"}</button>
            </div>
            <FormError message={errors.form} />
          </Form>
        </section>
      ) : (
        <p className="card p-4 text-sm text-muted" data-testid="viewer-note">Starting runs needs the engineer role; ask an admin. You can follow every job below.</p>
      )}
      <section className="card space-y-3 p-5" aria-labelledby="commits-title" data-testid="branch-commits">
        <h2 id="commits-title" className="text-xl font-semibold">Commits of {ref || "the branch"}</h2>
        {forkPoint ? (
          <p className="text-sm text-muted">
            {forkAt >= 0 ? `The newest ${forkAt} commit(s) are ${ref}'s own; it leaves main at ` : `${ref} leaves main at `}
            <Link className="num text-accent hover:underline" to={`/commits/${forkPoint}`}>{forkPoint.slice(0, 10)}</Link>
            {forkAt < 0 ? " (older than the commits listed)" : ""}.
          </p>
        ) : null}
        {canStart && forkPoint && commits[0] && commits[0].hash !== forkPoint ? (
          <Form method="post" className="flex flex-wrap items-end gap-2" aria-label="Compare the branch with main">
            <input type="hidden" name="intent" value="ab-branch" />
            <input type="hidden" name="ref" value={ref} />
            <label className="space-y-1 text-sm">
              <span className="font-medium">Suite</span>
              <select name="suite" className="input" defaultValue={suites.includes("quick") ? "quick" : suites[0]}>
                {suites.map((s) => <option key={s} value={s}>{s}</option>)}
              </select>
            </label>
            <button type="submit" className="btn-quiet" disabled={busy} data-testid="branch-ab">A/B: tip of {ref} against where it leaves main</button>
          </Form>
        ) : null}
        <ol className="divide-y divide-line/60 text-sm">
          {commits.map((c, i) => (
            <li key={c.hash} className={`flex flex-wrap items-baseline gap-2 py-1.5 ${forkAt >= 0 && i >= forkAt ? "text-muted" : ""}`} data-commit={c.hash} data-on-main={forkAt >= 0 && i >= forkAt ? "yes" : "no"}>
              <Link className="num text-accent hover:underline" to={`/commits/${c.hash}`}>{c.hash.slice(0, 10)}</Link>
              <span className="min-w-0 grow" data-ident>{c.subject}</span>
              <span className="num text-xs text-muted">{c.date.slice(0, 10)} · {c.author}</span>
              {i === forkAt ? <span className="w-full text-xs font-semibold text-accent" data-testid="fork-point">↑ {ref}'s own commits above · {ref} leaves main here · main below</span> : null}
            </li>
          ))}
        </ol>
      </section>
      <section className="space-y-2" aria-labelledby="jobs-title">
        <h2 id="jobs-title" className="text-xl font-semibold">Recent jobs</h2>
        {jobs.length === 0 ? <p className="text-muted">No jobs yet.</p> : (
          <ul className="card divide-y divide-line/60 text-sm" data-testid="job-list">
            {jobs.map((j) => (
              <li key={j.id} className="flex items-center justify-between px-4 py-2">
                <Link className="text-accent hover:underline" to={`/run-suite?ref=${encodeURIComponent(j.ref || ref)}&job=${j.id}`}>Job {j.id} · {j.kind === "ab" ? `A/B, ${j.suite}` : `${j.suite} on ${j.ref || "?"}`}</Link>
                <span className="num text-muted"><span data-job-list-status={j.id} className={statusTone("job", statusOf(j))}>{statusLabel("job", statusOf(j))}</span> · {fmtDate(j.createdAt)}</span>
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
