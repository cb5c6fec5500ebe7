import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/overview";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { useAutoRefresh } from "~/components/useAutoRefresh";
import { Field, Notice } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { benchJobPayload, enqueueJob, listJobs } from "~/models/jobs.server";
import { overviewCounts } from "~/models/overview.server";
import { readDemoProgress, type DemoProgressView } from "~/models/demo-progress.server";
import { overviewState } from "~/models/runs.server";
import { OverviewPanels } from "~/components/charts/OverviewState";
import { requireRole, requireUser } from "~/services/auth.server";
import { fieldErrors, type FieldErrors } from "~/services/forms.server";
import { checkBenchJob } from "~/services/job-check.server";
import { roleAtLeast, ROLE_DESCRIPTIONS } from "~/services/roles";
import { statusLabel, statusTone } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Overview · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const db = getDb();
  const jobs = listJobs(db, 10).map((j) => ({
    id: j.id,
    kind: j.kind,
    suite: String((j.payloadJson as { suite?: unknown } | null)?.suite ?? ""),
    status: j.status,
    createdAt: j.createdAt,
  }));
  return { role: user.role, counts: overviewCounts(db), jobs, state: overviewState(db), demo: readDemoProgress() };
}

/** Engineers queue a benchmark job for a suite (the job worker runs it). */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "engineer");
  const form = await request.formData();
  const values = { suite: String(form.get("suite") ?? "") };
  const parsed = benchJobPayload.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors<"suite">(parsed.error) as FieldErrors<"suite">, values, notice: null }, { status: 400 });
  const checked = await checkBenchJob(parsed.data);
  if (!checked.ok) return data({ errors: { suite: checked.message } as FieldErrors<"suite">, values, notice: null }, { status: 400 });
  const job = enqueueJob(getDb(), { kind: "bench", payload: checked.payload }, user.id);
  return data({ errors: {} as FieldErrors<"suite">, values, notice: `Queued job ${job.id}: bench suite ${parsed.data.suite}.` });
}

function Stat({ label, value, testId }: { label: string; value: number; testId: string }) {
  return (
    <div className="card p-5">
      <p className="text-sm text-muted">{label}</p>
      <p className="num mt-1 text-4xl font-semibold" data-testid={testId}>
        {value.toLocaleString("en")}
      </p>
    </div>
  );
}

/** The first start's background seeding (scripts/demo-seed.ts): how far it is, in cases. */
function DemoProgressCard({ demo }: { demo: DemoProgressView }) {
  const pct = demo.total ? Math.round((100 * demo.done) / demo.total) : 0;
  const text =
    demo.state === "running"
      ? demo.total
        ? `Preparing demo data: ${demo.done} of ${demo.total} cases`
        : "Preparing demo data: starting the quick suite"
      : demo.state === "history"
        ? `Preparing demo data: ${demo.total} of ${demo.total} cases measured, writing the demo history`
        : demo.state === "failed"
          ? `The demo data could not be prepared: ${demo.message ?? "unknown error"}`
          : `Demo data preparation stopped at ${demo.done} of ${demo.total} cases (the server was stopped while it ran).`;
  return (
    <section className="card space-y-2 p-5" aria-labelledby="demo-progress-title" data-testid="demo-progress" data-state={demo.state}>
      <h2 id="demo-progress-title" className="font-semibold" aria-live="polite">{text}</h2>
      {demo.state === "running" || demo.state === "history" ? (
        <>
          <div className="h-3 w-full overflow-hidden rounded bg-raised" role="progressbar" aria-valuemin={0} aria-valuemax={demo.total} aria-valuenow={demo.done} aria-label="Demo cases done">
            <div className="h-full bg-accent transition-all" style={{ width: `${pct}%` }} />
          </div>
          <p className="text-sm text-muted">A real run of the quick suite on this machine, then an invented history labelled "demo data". Pages fill in as it goes; this card updates itself.</p>
        </>
      ) : null}
    </section>
  );
}

/** Refresh intervals of the overview: quick while something runs, slow otherwise (a new run shows up). */
const REFRESH_ACTIVE_MS = 3000;
const REFRESH_IDLE_MS = 15000;

export default function Overview({ loaderData, actionData }: Route.ComponentProps) {
  const { counts, role, jobs, state, demo } = loaderData;
  const demoActive = demo?.state === "running" || demo?.state === "history";
  const active = demoActive || state.inProgress.length > 0 || jobs.some((j) => j.status === "queued" || j.status === "running");
  useAutoRefresh(active ? REFRESH_ACTIVE_MS : REFRESH_IDLE_MS);
  const busy = useNavigation().state === "submitting";
  return (
    <div className="space-y-8">
      {demo && demo.state !== "done" ? <DemoProgressCard demo={demo} /> : null}
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1 className="text-3xl font-semibold tracking-tight">Overview</h1>
          <p className="text-muted">What the database holds right now.</p>
        </div>
        <p className="flex items-center gap-2 text-sm text-muted">
          <RoleBadge role={role} /> {ROLE_DESCRIPTIONS[role]}
        </p>
      </div>
      <div className="grid gap-4 sm:grid-cols-3">
        <Stat label="Runs recorded" value={counts.runs} testId="count-runs" />
        <Stat label="Reference problems" value={counts.problems} testId="count-problems" />
        <Stat label="Open regressions" value={counts.openRegressions} testId="count-open-regressions" />
      </div>
      <OverviewPanels state={state} />
      {counts.latestRun ? (
        <section className="card p-5">
          <h2 className="font-semibold">Latest run</h2>
          <p className="mt-1 text-sm text-muted">
            Suite <span className="font-medium text-ink">{counts.latestRun.suite}</span> at commit{" "}
            <code className="num">{counts.latestRun.commitHash.slice(0, 10)}</code>, {statusLabel("run", counts.latestRun.status)}, started{" "}
            <time className="num" dateTime={new Date(counts.latestRun.startedAt).toISOString()}>
              {new Date(counts.latestRun.startedAt).toISOString().replace("T", " ").slice(0, 16)} UTC
            </time>
            {counts.latestRun.isDemo ? " (demo data)" : ""}
          </p>
        </section>
      ) : (
        <section className="card space-y-3 p-6" data-testid="empty-state">
          <h2 className="text-lg font-semibold">No runs recorded yet</h2>
          <p className="max-w-3xl text-muted">
            Arcwatch fills up when the benchmark runner solves the reference problems and records accuracy and timing
            for a commit. From the repository, run:
          </p>
          <pre className="num overflow-x-auto rounded-lg bg-raised px-4 py-3 text-sm">npm run bench -- --suite quick</pre>
          <p className="max-w-3xl text-sm text-muted">
            The run is written to the database named by <code className="num">ARCWATCH_DB</code> (default{" "}
            <code className="num">./data/arcwatch.db</code>) and appears here when it finishes.
          </p>
        </section>
      )}
      <section className="card space-y-4 p-6" data-testid="jobs">
        <div className="flex flex-wrap items-end justify-between gap-4">
          <div>
            <h2 className="text-lg font-semibold">Benchmark jobs</h2>
            <p className="text-sm text-muted">Runs started from here are queued and picked up by the job worker.</p>
          </div>
          {roleAtLeast(role, "engineer") ? (
            <Form method="post" className="flex flex-wrap items-end gap-2" noValidate aria-label="Queue a benchmark job">
              <Field label="Suite" name="suite" defaultValue={actionData?.values.suite ?? "quick"} error={actionData?.errors.suite} className="input w-full max-w-48" />
              <button type="submit" className="btn" disabled={busy}>
                Queue run
              </button>
            </Form>
          ) : (
            <p className="text-sm text-muted">Engineers and admins can queue runs.</p>
          )}
        </div>
        <Notice message={actionData?.notice} />
        {jobs.length === 0 ? (
          <p className="text-sm text-muted">No jobs yet.</p>
        ) : (
          <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-muted">
              <tr>
                <th className="py-2 font-medium">Job</th>
                <th className="py-2 font-medium">Kind</th>
                <th className="py-2 font-medium">Suite</th>
                <th className="py-2 font-medium">Status</th>
                <th className="py-2 font-medium">Queued (UTC)</th>
              </tr>
            </thead>
            <tbody>
              {jobs.map((j) => (
                <tr key={j.id} className="border-t border-line" data-job-row={j.id}>
                  <td className="num py-2">{j.id}</td>
                  <td className="py-2">{j.kind}</td>
                  <td className="py-2">{j.suite}</td>
                  <td className={`py-2 ${statusTone("job", j.status)}`}>{statusLabel("job", j.status)}</td>
                  <td className="num py-2">{new Date(j.createdAt).toISOString().replace("T", " ").slice(0, 19)}</td>
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

export const ErrorBoundary = RouteErrorBoundary;
