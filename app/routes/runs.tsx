import { Form, Link, useNavigation } from "react-router";
import type { Route } from "./+types/runs";
import { DemoBadge, FlightCaution, fmtDate, fmtSeconds } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { ExportLinks, Pager, ServerTable, type ServerColumn } from "~/components/tables/ServerTable";
import { getDb } from "~/db/client.server";
import { RUN_STATUSES } from "~/db/schema";
import { listRuns, parseRunListQuery, runFilterOptions, type RunListItem } from "~/models/runs.server";
import { requireUser } from "~/services/auth.server";
import { roleAtLeast } from "~/services/roles";
import { DIRECTION, statusLabel, statusTone } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Runs · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const db = getDb();
  const q = parseRunListQuery(new URL(request.url).searchParams);
  return { result: listRuns(db, q), query: q, options: runFilterOptions(db), canStart: roleAtLeast(user.role, "engineer") };
}


const COLUMNS: ServerColumn<RunListItem>[] = [
  { id: "startedAt", header: "Started (UTC)", sortKey: "startedAt", cell: (r) => <Link to={`/runs/${r.id}`} className="num whitespace-nowrap font-medium text-accent hover:underline" data-testid="run-link">{fmtDate(r.startedAt).replace(" UTC", "")}</Link> },
  {
    id: "commit",
    header: "Commit",
    sortKey: "commit",
    cell: (r) => (
      <span className="flex flex-col">
        {r.isDemo ? <code className="num">{r.commitHash.slice(0, 10)}</code> : <Link to={`/commits/${r.commitHash}`} className="num text-accent hover:underline" data-testid="commit-link"><code>{r.commitHash.slice(0, 10)}</code></Link>}
        <span className="max-w-[16rem] truncate text-xs text-muted" title={r.commitSubject ?? ""} data-ident>{r.commitSubject}</span>
      </span>
    ),
  },
  { id: "branch", header: "Branch", sortKey: "branch", cell: (r) => <span className="flex flex-wrap items-center gap-1">{r.branch ?? <span className="text-muted">(detached)</span>}<DemoBadge show={r.isDemo} /></span> },
  { id: "suite", header: "Suite", sortKey: "suite", cell: (r) => r.suite },
  { id: "machine", header: "Machine", sortKey: "machine", cell: (r) => <span className="block max-w-[9rem] truncate text-xs" title={`${r.machine} · ${r.machineKey}`}>{r.machine}</span> },
  { id: "duration", header: "Duration", sortKey: "duration", align: "right", cell: (r) => fmtSeconds(r.durationSeconds) },
  { id: "solved", header: "Solved", sortKey: "solved", align: "right", cell: (r) => <span className="text-good">{r.solved}</span> },
  { id: "failed", header: "Failed", sortKey: "failed", align: "right", cell: (r) => <span className={r.failed ? "text-bad" : "text-muted"}>{r.failed}</span> },
  { id: "regressions", header: "Regressions", sortKey: "regressions", align: "right", cell: (r) => <span className={r.regressions ? "font-semibold text-bad" : "text-muted"}>{r.regressions ? `${DIRECTION.regression.symbol} ${r.regressions}` : 0}{r.improvements ? <span className="ml-1 text-good" title={`${r.improvements} ${DIRECTION.improvement.label}(s)`}>{DIRECTION.improvement.symbol} {r.improvements}</span> : null}</span> },
  { id: "status", header: "Status", sortKey: "status", cell: (r) => <span className={statusTone("run", r.status)}>{statusLabel("run", r.status)}</span> },
];

export default function Runs({ loaderData }: Route.ComponentProps) {
  const { result, query, options, canStart } = loaderData;
  const loading = useNavigation().state === "loading";
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1 className="text-3xl font-semibold tracking-tight">Runs</h1>
          <p className="text-muted">Every suite run recorded, from the command line, a CI runner or this site.</p>
        </div>
        <div className="flex items-center gap-3">
          <ExportLinks apiPath="/api/runs" />
          {canStart ? <Link to="/run-suite" className="btn" data-testid="start-run-link">Run a suite</Link> : null}
        </div>
      </div>
      <FlightCaution />
      <Form method="get" className="card grid gap-3 p-4 sm:grid-cols-2 lg:grid-cols-6" aria-label="Filter runs">
        <input type="hidden" name="sort" value={query.sort} />
        <input type="hidden" name="dir" value={query.dir} />
        <label className="space-y-1 text-sm lg:col-span-2">
          <span className="font-medium">Commit or subject</span>
          <input name="q" defaultValue={query.q ?? ""} className="input" placeholder="e.g. 3f9c2e or line search" />
        </label>
        <label className="space-y-1 text-sm">
          <span className="font-medium">Branch</span>
          <select name="branch" defaultValue={query.branch ?? ""} className="input">
            <option value="">All branches</option>
            {options.branches.map((b) => <option key={b} value={b}>{b}</option>)}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="font-medium">Suite</span>
          <select name="suite" defaultValue={query.suite ?? ""} className="input">
            <option value="">All suites</option>
            {options.suites.map((s) => <option key={s} value={s}>{s}</option>)}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="font-medium">Status</span>
          <select name="status" defaultValue={query.status ?? ""} className="input">
            <option value="">Any status</option>
            {RUN_STATUSES.map((s) => <option key={s} value={s}>{s}</option>)}
          </select>
        </label>
        <label className="space-y-1 text-sm">
          <span className="font-medium">Demo data</span>
          <select name="demo" defaultValue={query.demo} className="input">
            <option value="include">Included</option>
            <option value="exclude">Hidden</option>
            <option value="only">Only demo</option>
          </select>
        </label>
        <div className="flex items-end gap-2 lg:col-span-6">
          <button type="submit" className="btn" data-testid="filter-submit">{loading ? "Filtering…" : "Filter"}</button>
          <Link to="/runs" className="btn-quiet">Clear</Link>
        </div>
      </Form>
      <div aria-busy={loading} className={loading ? "opacity-60" : ""}>
        <ServerTable
          columns={COLUMNS}
          rows={result.rows}
          rowKey={(r) => r.id}
          sort={query.sort}
          dir={query.dir}
          caption="Runs"
          testId="runs-table"
          empty={
            <>
              No runs match. {result.total === 0 && !query.q && !query.branch && !query.suite && !query.status ? (
                <>Record one with <code>npm run bench -- --suite quick</code>{canStart ? <>, or <Link className="text-accent underline" to="/run-suite">run a suite from here</Link></> : null}.</>
              ) : (
                <>Loosen the filters or <Link className="text-accent underline" to="/runs">clear them</Link>.</>
              )}
            </>
          }
        />
      </div>
      <Pager page={result.page} pages={result.pages} total={result.total} label="runs" />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
