import { Form, Link, useSearchParams } from "react-router";
import type { Route } from "./+types/problems";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { SchemeStateCell } from "~/components/problems/SchemeState";
import { getDb } from "~/db/client.server";
import { cachedProblemLibrary } from "~/services/data-cache.server";
import { SCHEMES } from "~/components/problems/schemes";
import { requireUser } from "~/services/auth.server";
import { roleAtLeast } from "~/services/roles";
import { busyPage, SolverPoolBusy } from "~/services/solver-pool.server";

/** A refusal's Retry-After (solver threads busy) reaches the browser with the error page. */
export const headers: Route.HeadersFunction = ({ errorHeaders }) => {
  const retry = errorHeaders?.get("Retry-After");
  return retry ? { "Retry-After": retry } : new Headers();
};

export const meta: Route.MetaFunction = () => [{ title: "Problem library · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const url = new URL(request.url);
  const tag = url.searchParams.get("tag") ?? undefined;
  const q = url.searchParams.get("q") ?? undefined;
  let all;
  try {
    // each problem compiled on a solver thread, kept by content (app/services/problem-views.server.ts)
    all = await cachedProblemLibrary(getDb());
  } catch (err) {
    if (err instanceof SolverPoolBusy) throw busyPage(err);
    throw err;
  }
  const tags = [...new Set(all.flatMap((p) => p.tags))].sort();
  const entries = all.filter((e) => (!tag || e.tags.includes(tag)) && (!q || e.id.includes(q.toLowerCase()) || e.title.toLowerCase().includes(q.toLowerCase())));
  return { entries, tags, canAdd: roleAtLeast(user.role, "engineer") };
}

export default function Problems({ loaderData }: Route.ComponentProps) {
  const { entries, tags, canAdd } = loaderData;
  const [params] = useSearchParams();
  const tag = params.get("tag");
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1 className="text-3xl font-semibold tracking-tight">Problem library</h1>
          <p className="text-muted">Reference problems with trusted answers; each scheme's state is from the latest run on main.</p>
        </div>
        <div className="flex gap-2">
          <Link to="/compare" className="btn-quiet">
            Compare schemes
          </Link>
          {canAdd ? (
            <Link to="/problems/new" className="btn" data-testid="add-problem">
              Add a problem
            </Link>
          ) : null}
        </div>
      </div>
      <Form method="get" className="flex flex-wrap items-center gap-2">
        <input name="q" defaultValue={params.get("q") ?? ""} placeholder="Search id or title" className="input max-w-xs" aria-label="Search" />
        {tag ? <input type="hidden" name="tag" value={tag} /> : null}
        <button type="submit" className="btn-quiet">
          Search
        </button>
      </Form>
      <div className="flex flex-wrap gap-2 text-sm" aria-label="Tags">
        <Link to="/problems" className={`rounded-full border px-3 py-1 ${!tag ? "border-accent text-accent" : "border-line"}`}>
          all
        </Link>
        {tags.map((t) => (
          <Link key={t} to={`/problems?tag=${encodeURIComponent(t)}`} className={`rounded-full border px-3 py-1 ${tag === t ? "border-accent text-accent" : "border-line"}`}>
            {t}
          </Link>
        ))}
      </div>
      <section className="card overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="problem-library">
          <thead className="border-b border-line text-muted">
            <tr>
              <th className="px-3 py-3 font-medium">Problem</th>
              <th className="px-3 py-3 font-medium">Tags</th>
              <th className="px-3 py-3 font-medium">Reference provenance</th>
              {SCHEMES.map((s) => (
                <th key={s} className="px-3 py-3 font-medium">
                  {s}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {entries.length === 0 ? (
              <tr>
                <td colSpan={3 + SCHEMES.length} className="px-3 py-6 text-center text-muted">
                  No problem matches.
                </td>
              </tr>
            ) : (
              entries.map((e) => (
                <tr key={e.id} className="border-b border-line align-top last:border-0" data-problem-row={e.id}>
                  <td className="px-3 py-3">
                    <Link to={`/problems/${e.id}`} className="font-medium hover:underline">
                      {e.title}
                    </Link>
                    <span className="num block text-xs text-muted">
                      {e.id}
                      {e.origin === "uploaded" ? " · added in Arcwatch" : ""}
                    </span>
                    {e.error ? <span className="block text-xs text-bad">{e.error}</span> : null}
                  </td>
                  <td className="px-3 py-3">
                    <div className="flex max-w-56 flex-wrap gap-1">
                      {e.tags.map((t) => (
                        <span key={t} className="rounded bg-raised px-1.5 py-0.5 text-xs">
                          {t}
                        </span>
                      ))}
                    </div>
                  </td>
                  <td className="px-3 py-3 text-xs">
                    {e.provenance.length === 0 ? (
                      <span className="text-muted">none</span>
                    ) : (
                      <ul className="space-y-0.5">
                        {e.provenance.map((p) => (
                          <li key={p.quantity}>
                            <span className="text-muted">{p.quantity}:</span> {p.kind}
                          </li>
                        ))}
                      </ul>
                    )}
                  </td>
                  {SCHEMES.map((s) => (
                    <td key={s} className="px-3 py-3">
                      <SchemeStateCell state={e.schemes[s]} />
                    </td>
                  ))}
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
