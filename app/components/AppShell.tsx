import type { ReactNode } from "react";
import { Form, NavLink } from "react-router";
import type { Role } from "~/db/schema";
import { roleAtLeast } from "~/services/roles";
import { Wordmark } from "./Logo";
import { ThemeToggle } from "./ThemeToggle";

export interface ShellUser {
  name: string;
  email: string;
  role: Role;
}

function NavItem({ to, children, end }: { to: string; children: ReactNode; end?: boolean }) {
  return (
    <NavLink
      to={to}
      end={end}
      className={({ isActive }) =>
        `rounded-md px-3 py-1.5 text-sm font-medium ${isActive ? "bg-raised text-ink" : "text-muted hover:text-ink"}`
      }
    >
      {children}
    </NavLink>
  );
}

export function RoleBadge({ role }: { role: Role }) {
  const tone = role === "admin" ? "border-accent text-accent" : role === "engineer" ? "border-good text-good" : "border-line text-muted";
  return (
    <span className={`rounded-full border px-2 py-0.5 text-xs font-semibold uppercase tracking-wide ${tone}`} data-role={role}>
      {role}
    </span>
  );
}

export function AppShell({ user, children }: { user: ShellUser; children: ReactNode }) {
  return (
    <div className="flex flex-col">
      <header className="border-b border-line bg-surface">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-4 px-4 py-3 2xl:max-w-[110rem]">
          <NavLink to="/" aria-label="Arcwatch overview">
            <Wordmark />
          </NavLink>
          <nav aria-label="Main" className="flex flex-1 flex-wrap items-center gap-1">
            <NavItem to="/" end>
              Overview
            </NavItem>
            <NavItem to="/runs">Runs</NavItem>
            <NavItem to="/history">History</NavItem>
            <NavItem to="/problems">Problems</NavItem>
            <NavItem to="/compare">Compare</NavItem>
            <NavItem to="/regressions">Regressions</NavItem>
            <NavItem to="/run-suite">Run a suite</NavItem>
            <NavItem to="/settings">Settings</NavItem>
            {roleAtLeast(user.role, "admin") ? <NavItem to="/admin/users">Users</NavItem> : null}
            {roleAtLeast(user.role, "admin") ? <NavItem to="/admin/tokens">API tokens</NavItem> : null}
            {roleAtLeast(user.role, "admin") ? <NavItem to="/admin/outbox">Outbox</NavItem> : null}
            <NavItem to="/account">Account</NavItem>
          </nav>
          <div className="flex items-center gap-3">
            <span className="hidden text-sm text-muted md:inline" data-testid="signed-in-as">
              {user.name}
            </span>
            <RoleBadge role={user.role} />
            <ThemeToggle />
            <Form method="post" action="/signout">
              <button type="submit" className="btn-quiet" data-testid="sign-out">
                Sign out
              </button>
            </Form>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-8 2xl:max-w-[110rem]">{children}</main>
    </div>
  );
}
