import type { Route } from "./+types/overview";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { getDb } from "~/db/client.server";
import { overviewCounts } from "~/models/overview.server";
import { requireUser } from "~/services/auth.server";
import { ROLE_DESCRIPTIONS } from "~/services/roles";

export const meta: Route.MetaFunction = () => [{ title: "Overview · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { role: user.role, counts: overviewCounts(getDb()) };
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

export default function Overview({ loaderData }: Route.ComponentProps) {
  const { counts, role } = loaderData;
  return (
    <div className="space-y-8">
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
      {counts.latestRun ? (
        <section className="card p-5">
          <h2 className="font-semibold">Latest run</h2>
          <p className="mt-1 text-sm text-muted">
            Suite <span className="font-medium text-ink">{counts.latestRun.suite}</span> at commit{" "}
            <code className="num">{counts.latestRun.commitHash.slice(0, 10)}</code>, {counts.latestRun.status}, started{" "}
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
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
