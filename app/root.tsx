import { useEffect } from "react";
import { data, isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteError } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { ErrorView } from "./components/ErrorView";
import { useNonce } from "./nonce";
import { themeBootScript } from "./components/ThemeToggle";
import { checkSameOrigin } from "./services/csrf.server";
import { pageCacheMiddleware } from "./services/page-cache.server";

/**
 * Every request passes here first: state-changing requests from another origin are refused
 * before any action runs (403; JSON for /api/...). Then the heavy read-only pages are served
 * from their rendered copy when one exists for this user and data version
 * (app/services/page-cache.server.ts; authentication still runs per request).
 */
export const middleware: Route.MiddlewareFunction[] = [
  async ({ request }, next) => {
    const verdict = checkSameOrigin(request);
    if (!verdict.ok) {
      if (new URL(request.url).pathname.startsWith("/api/")) {
        return Response.json({ error: `Cross-origin request refused. ${verdict.reason}` }, { status: 403 });
      }
      throw data({ message: `Cross-origin request refused. ${verdict.reason}` }, { status: 403 });
    }
    return next();
  },
  ({ request }, next) => pageCacheMiddleware(request, next),
];

export const meta: Route.MetaFunction = () => [
  { title: "Arcwatch" },
  { name: "description", content: "Accuracy and speed of your trajectory-optimization solver, commit by commit." },
];

export const links: Route.LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return (
    <html lang="en" suppressHydrationWarning>
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <script nonce={nonce} dangerouslySetInnerHTML={{ __html: themeBootScript }} />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen bg-bg text-ink">
        <div className="flex min-h-screen flex-col">
          <div className="flex-1">{children}</div>
          <footer className="border-t border-line px-4 py-4 text-center text-xs text-muted" data-testid="caution">
            Arcwatch reports numerical benchmarks. Any use of a computed trajectory in flight needs independent
            verification.
          </footer>
        </div>
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary() {
  const error = useRouteError();
  const status = isRouteErrorResponse(error) ? error.status : 500;
  return (
    <main className="px-4 py-16" data-root-error={status}>
      <ErrorView />
    </main>
  );
}
