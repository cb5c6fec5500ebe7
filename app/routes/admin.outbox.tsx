import { Link } from "react-router";
import type { Route } from "./+types/admin.outbox";
import { fmtDate } from "~/components/Caution";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { getDb } from "~/db/client.server";
import { listOutbox } from "~/models/settings.server";
import { requireRole } from "~/services/auth.server";

export const meta: Route.MetaFunction = () => [{ title: "Outbox · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  const page = Math.max(1, Number(new URL(request.url).searchParams.get("page")) || 1);
  return listOutbox(getDb(), page);
}

/** Every message sent, or caught by the local mail stand-in when no SMTP server is set. */
export default function Outbox({ loaderData }: Route.ComponentProps) {
  const { rows, total, page, pages } = loaderData;
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Outbox</h1>
        <p className="text-muted">Mail Arcwatch sent ({total}). Without SMTP_HOST, the local stand-in keeps every message here instead of delivering it.</p>
      </div>
      {rows.length === 0 ? <p className="card p-6 text-muted">No mail yet. Alerts appear here when a run finds a regression in something a user follows (Settings → E-mail subscriptions).</p> : (
        <ul className="space-y-3" data-testid="outbox">
          {rows.map((m) => (
            <li key={m.id} className="card p-4">
              <details>
                <summary className="cursor-pointer">
                  <span className="font-medium">{m.subject}</span> <span className="text-sm text-muted">to {m.to} · {fmtDate(m.createdAt)} · {m.sentAt ? "sent" : m.error ? <span className="text-bad">failed: {m.error}</span> : "pending"}</span>
                </summary>
                <pre className="mt-2 overflow-auto whitespace-pre-wrap text-xs">{m.body}</pre>
              </details>
            </li>
          ))}
        </ul>
      )}
      <nav className="flex justify-between text-sm" aria-label="Pages">
        <span className="text-muted">page {page} of {pages}</span>
        <span className="flex gap-2">
          {page > 1 ? <Link className="btn-quiet" to={`?page=${page - 1}`}>← Newer</Link> : null}
          {page < pages ? <Link className="btn-quiet" to={`?page=${page + 1}`}>Older →</Link> : null}
        </span>
      </nav>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
