import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/commits.$sha";
import { DemoBadge, fmtDate } from "~/components/Caution";
import { DiffView } from "~/components/commits/DiffView";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { FormError } from "~/components/Field";
import { AB_STATE, AbVerdict } from "~/components/runs/AbVerdict";
import { getDb } from "~/db/client.server";
import { abChecksOfCommit } from "~/models/ab-checks.server";
import { commitDiff, commitHeader, regressionsBlamedOn, runsAtCommit, SHA } from "~/models/commits.server";
import { enqueueJob } from "~/models/jobs.server";
import { checkAbJob, queueAbJob } from "~/services/ab-confirm.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { listSuitesAt } from "~/services/git.server";
import { checkBenchJob } from "~/services/job-check.server";
import { roleAtLeast } from "~/services/roles";
import { DIRECTION, kindLabel, metricLabel, statusLabel, statusTone } from "~/vocabulary";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.commit.subject ?? "Commit"} · Arcwatch` }];

/** Diff lines shown at first; "show more" multiplies by 4 up to the most a page carries. */
const FIRST_LINES = 600;
const MOST_LINES = 20_000;

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  if (!SHA.test(params.sha)) throw data({ message: `"${params.sha.slice(0, 60)}" is not a commit hash (7 to 40 hexadecimal digits).` }, { status: 404 });
  const commit = await commitHeader(params.sha);
  if (!commit) throw data({ message: `Commit ${params.sha} is not in this server's repository.` }, { status: 404 });
  const url = new URL(request.url);
  const asked = Number(url.searchParams.get("lines"));
  const limit = Number.isInteger(asked) && asked > 0 ? Math.min(asked, MOST_LINES) : FIRST_LINES;
  const db = getDb();
  const [diff, suites] = await Promise.all([commitDiff(commit, limit), listSuitesAt(commit.hash)]);
  const jobId = Number(url.searchParams.get("job"));
  return {
    commit,
    diff,
    limit,
    suites,
    runs: runsAtCommit(db, commit.hash),
    blamed: regressionsBlamedOn(db, commit.hash),
    checks: abChecksOfCommit(db, commit.hash),
    canAct: roleAtLeast(user.role, "engineer"),
    queued: Number.isInteger(jobId) && jobId > 0 ? { id: jobId, kind: url.searchParams.get("kind") === "ab" ? "ab" : "bench" } : null,
  };
}

type Field = "suite" | "form";

/** Engineers: run a suite at this commit (bench job), or compare it with its parent (A/B job). */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "engineer");
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const suite = String(form.get("suite") ?? "").trim();
  const fail = (field: Field, message: string) => data({ intent, errors: { [field]: message } as Partial<Record<Field, string>> }, { status: 400 });
  if (!SHA.test(params.sha)) return fail("form", "Not a commit hash.");
  const commit = await commitHeader(params.sha);
  if (!commit) return fail("form", `Commit ${params.sha} is not in this server's repository.`);
  if (!/^[a-z0-9][a-z0-9_-]{0,63}$/.test(suite)) return fail("suite", "Pick a suite.");
  const db = getDb();
  if (intent === "run") {
    const checked = await checkBenchJob({ suite, commit: commit.hash });
    if (!checked.ok) return fail(checked.field === "suite" ? "suite" : "form", checked.message);
    const job = enqueueJob(db, { kind: "bench", payload: checked.payload }, user.id > 0 ? user.id : null);
    return redirect(`/commits/${commit.hash}?job=${job.id}&kind=bench`);
  }
  if (intent === "ab") {
    const parent = commit.parents[0];
    if (!parent) return fail("form", "This is the repository's first commit: it has no parent to compare with.");
    const checked = await checkAbJob(db, { base: parent, head: commit.hash, suite });
    if (!checked.ok) return fail(checked.field === "suite" || checked.field === "cases" ? "suite" : "form", checked.message);
    const { job } = queueAbJob(db, checked.payload, user.id > 0 ? user.id : null);
    return redirect(`/commits/${commit.hash}?job=${job.id}&kind=ab`);
  }
  return fail("form", 'Unknown action (use "run" or "ab").');
}

export default function CommitPage({ loaderData, actionData }: Route.ComponentProps) {
  const { commit, diff, limit, suites, runs, blamed, checks, canAct, queued } = loaderData;
  const errors = (actionData?.errors ?? {}) as Partial<Record<Field, string>>;
  const busy = useNavigation().state === "submitting";
  const moreHref = limit < MOST_LINES ? `/commits/${commit.hash}?lines=${Math.min(limit * 4, MOST_LINES)}` : null;
  const defaultSuite = suites.includes("quick") ? "quick" : suites[0];
  return (
    <div className="space-y-6">
      <p className="text-sm text-muted">
        <Link to="/run-suite" className="hover:underline">
          Commits
        </Link>{" "}
        / <span className="num">{commit.hash.slice(0, 10)}</span>
      </p>
      <div>
        <h1 className="text-2xl font-semibold tracking-tight" data-testid="commit-subject" data-ident>{commit.subject}</h1>
        <p className="num text-sm text-muted">
          {commit.hash} · {commit.author} · {commit.date}
        </p>
        <p className="num text-sm text-muted">
          {commit.parents.length === 0 ? "first commit" : commit.parents.length > 1 ? "merge of " : "parent "}
          {commit.parents.map((p, i) => (
            <span key={p}>
              {i ? ", " : ""}
              <Link className="text-accent hover:underline" to={`/commits/${p}`}>{p.slice(0, 10)}</Link>
            </span>
          ))}
          {commit.parents.length > 1 ? " (diff against the first parent)" : ""}
        </p>
        {commit.body ? <pre className="mt-3 whitespace-pre-wrap text-sm" data-testid="commit-body">{commit.body}</pre> : <p className="mt-3 text-sm text-muted">No message body.</p>}
      </div>

      {queued ? (
        <p className="card p-3 text-sm" data-testid="job-queued" role="status">
          {queued.kind === "ab" ? "A/B comparison with the parent" : "Suite run"} queued as{" "}
          <Link className="text-accent hover:underline" to={`/run-suite?job=${queued.id}`}>job {queued.id}</Link>: it starts when the machine is free (one job at a time).
        </p>
      ) : null}

      <section className="card space-y-3 p-4" data-testid="commit-actions">
        <h2 className="text-lg font-semibold">Measure this commit</h2>
        {!canAct ? (
          <p className="text-sm text-muted">Starting runs needs the engineer role; ask an admin.</p>
        ) : suites.length === 0 ? (
          <p className="text-sm text-muted">This commit has no suites (bench/suites/*.json).</p>
        ) : (
          <Form method="post" className="flex flex-wrap items-end gap-2">
            <label className="space-y-1 text-sm">
              <span className="block font-medium">Suite</span>
              <select name="suite" className="input" defaultValue={defaultSuite} data-testid="commit-suite" aria-invalid={errors.suite ? true : undefined}>
                {suites.map((s) => (
                  <option key={s} value={s}>{s}</option>
                ))}
              </select>
            </label>
            <button className="btn" type="submit" name="intent" value="run" disabled={busy} data-testid="commit-run">
              Run the suite here
            </button>
            <button className="btn-quiet" type="submit" name="intent" value="ab" disabled={busy || commit.parents.length === 0} data-testid="commit-ab" title="Interleaved A/B: this commit and its parent run alternately in one sitting">
              Compare with the parent (A/B)
            </button>
            {errors.suite ? <p className="w-full text-sm text-bad" data-field-error="suite">{errors.suite}</p> : null}
            <FormError message={errors.form} />
          </Form>
        )}
      </section>

      <section className="card space-y-2 p-4" data-testid="commit-runs">
        <h2 className="text-lg font-semibold">Runs at this commit</h2>
        {runs.length === 0 ? (
          <p className="text-sm text-muted">No run has measured this commit yet.</p>
        ) : (
          <ul className="space-y-1 text-sm">
            {runs.map((r) => (
              <li key={r.id} className="flex flex-wrap items-center gap-2">
                <Link className="num text-accent hover:underline" to={`/runs/${r.id}`}>{r.id.slice(0, 8)}</Link>
                <span>suite {r.suite}</span>
                <span className={statusTone("run", r.status)}>{statusLabel("run", r.status)}</span>
                <span className="text-muted">{r.branch ?? "no branch"} · {fmtDate(r.startedAt)}</span>
                <span className={r.regressions ? "text-bad" : "text-muted"}>{DIRECTION.regression.symbol} {r.regressions}</span>
                <span className={r.improvements ? "text-good" : "text-muted"}>{DIRECTION.improvement.symbol} {r.improvements}</span>
                <DemoBadge show={r.isDemo} />
              </li>
            ))}
          </ul>
        )}
      </section>

      <section className="card space-y-2 p-4" data-testid="commit-blamed">
        <h2 className="text-lg font-semibold">Regressions blamed on this commit</h2>
        {blamed.length === 0 ? (
          <p className="text-sm text-muted">None: no run at this commit flagged a regression.</p>
        ) : (
          <ul className="space-y-1 text-sm">
            {blamed.map((b) => (
              <li key={b.id}>
                <Link className="num text-accent hover:underline" to={`/regressions/${b.id}`}>#{b.id} {b.caseKey}</Link> · {kindLabel(b.kind as never)} in {metricLabel(b.metric).toLowerCase()}
                {b.ratio !== null ? <span className="num"> ×{b.ratio.toFixed(2)}</span> : null} · {statusLabel("regression", b.status)} · {b.how === "found" ? "found here" : "seen here again"}
              </li>
            ))}
          </ul>
        )}
      </section>

      {checks.length ? (
        <section className="card space-y-3 p-4" data-testid="commit-ab-checks">
          <h2 className="text-lg font-semibold">Interleaved A/B comparisons</h2>
          {checks.map((c) => (
            <AbVerdict key={c.id} check={c} />
          ))}
          <p className="text-xs text-muted">States: {Object.values(AB_STATE).map((s) => s.label).join(", ")}.</p>
        </section>
      ) : null}

      <section className="space-y-2">
        <h2 className="text-lg font-semibold">Changes</h2>
        <p className="text-sm text-muted">
          {diff.files.length} file(s), <span className="text-good">+{diff.files.reduce((a, f) => a + f.added, 0)}</span> <span className="text-bad">−{diff.files.reduce((a, f) => a + f.removed, 0)}</span>
          {commit.parents.length ? ` against ${commit.parents[0]!.slice(0, 10)}` : ""}
        </p>
        <DiffView diff={diff} moreHref={moreHref} />
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
