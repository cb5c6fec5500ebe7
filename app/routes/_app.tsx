import { Outlet } from "react-router";
import type { Route } from "./+types/_app";
import { AppShell } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { requireUser } from "~/services/auth.server";

/** The signed-in shell. Child routes check the user (and role) again in their own loaders. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { user: { name: user.name, email: user.email, role: user.role } };
}

export default function AppLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user}>
      <Outlet />
    </AppShell>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
