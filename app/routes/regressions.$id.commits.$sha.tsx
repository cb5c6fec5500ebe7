import { data, Link } from "react-router";
import type { Route } from "./+types/regressions.$id.commits.$sha";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { diffSummary } from "~/models/regressions.server";
import { requireUser } from "~/services/auth.server";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Commit ${params.sha.slice(0, 10)} · Arcwatch` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const d = await diffSummary(params.sha);
  if (!d) throw data({ message: "That commit is not in this server's repository." }, { status: 404 });
  return { d };
}

export default function CommitSummary({ loaderData, params }: Route.ComponentProps) {
  const { d } = loaderData;
  const added = d.files.reduce((a, f) => a + (f.added ?? 0), 0);
  const removed = d.files.reduce((a, f) => a + (f.removed ?? 0), 0);
  return (
    <div className="space-y-6">
      <p className="text-sm text-muted">
        <Link to={`/regressions/${params.id}`} className="hover:underline">
          Regression {params.id}
        </Link>{" "}
        / commit
      </p>
      <div>
        <h1 className="text-2xl font-semibold tracking-tight">{d.subject}</h1>
        <p className="num text-sm text-muted">
          {d.hash} · {d.author} · {d.date}
        </p>
        {d.body ? <pre className="mt-3 whitespace-pre-wrap text-sm">{d.body}</pre> : null}
      </div>
      <section className="card overflow-x-auto p-4">
        <p className="mb-2 text-sm">
          {d.files.length} file(s) changed, <span className="text-good">+{added}</span> <span className="text-bad">−{removed}</span>
        </p>
        <table className="text-sm" data-testid="diff-summary">
          <tbody>
            {d.files.map((f) => (
              <tr key={f.path}>
                <td className="num pr-4 text-right text-good">{f.added ?? "bin"}</td>
                <td className="num pr-4 text-right text-bad">{f.removed ?? ""}</td>
                <td className="num">{f.path}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
