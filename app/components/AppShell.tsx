import { useEffect, useState, type ReactNode } from "react";
import { Form, NavLink, useLocation } from "react-router";
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
        `whitespace-nowrap rounded-md px-3 py-2 text-sm font-medium lg:px-2 lg:py-1.5 xl:px-2.5 ${isActive ? "bg-raised text-ink" : "text-muted hover:text-ink"}`
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

/**
 * The signed-in frame. From 1024 px (Tailwind's lg) the navigation is one row beside the
 * wordmark; below, a Menu button opens it as a column, so a phone never gets five rows of
 * links. The glossary (every term, symbol and colour) is linked from every page's header.
 */
export function AppShell({ user, children }: { user: ShellUser; children: ReactNode }) {
  const [open, setOpen] = useState(false);
  const location = useLocation();
  // A followed link closes the compact menu.
  useEffect(() => setOpen(false), [location.pathname]);
  const admin = roleAtLeast(user.role, "admin");
  return (
    <div className="flex flex-col">
      <header className="border-b border-line bg-surface">
        <div className="mx-auto flex max-w-[110rem] flex-wrap items-center gap-x-3 gap-y-2 px-4 py-3 lg:flex-nowrap">
          <NavLink to="/" aria-label="Arcwatch overview" className="shrink-0">
            <Wordmark />
          </NavLink>
          <button type="button" className="btn-quiet ml-auto lg:hidden" aria-expanded={open} aria-controls="main-nav" onClick={() => setOpen((o) => !o)} data-testid="menu-button">
            {open ? "Close menu" : "Menu"}
          </button>
          <nav id="main-nav" aria-label="Main" data-testid="main-nav" className={`${open ? "flex" : "hidden"} w-full flex-col gap-0.5 lg:flex lg:w-auto lg:flex-1 lg:flex-row lg:items-center lg:gap-0.5`}>
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
            {admin ? (
              <span className="flex flex-col border-line lg:ml-1 lg:flex-row lg:items-center lg:border-l lg:pl-1" role="group" aria-label="Administration">
                <NavItem to="/admin/users">Users</NavItem>
                <NavItem to="/admin/tokens">API tokens</NavItem>
                <NavItem to="/admin/outbox">Outbox</NavItem>
              </span>
            ) : null}
            <span className="lg:hidden">
              <NavItem to="/account">Account</NavItem>
            </span>
          </nav>
          <div className={`${open ? "flex" : "hidden"} w-full items-center gap-2 lg:flex lg:w-auto lg:shrink-0`}>
            <NavLink to="/glossary" className="whitespace-nowrap text-sm font-medium text-muted hover:text-ink" data-testid="help-glossary" title="Help: what every term, symbol and colour means">
              Help: glossary
            </NavLink>
            <NavLink to="/account" className="flex items-center gap-2 text-sm text-muted hover:text-ink" title={`${user.name} · account`} data-testid="account-link">
              <span className="hidden 2xl:inline" data-testid="signed-in-as">
                {user.name}
              </span>
              <RoleBadge role={user.role} />
            </NavLink>
            <ThemeToggle />
            <Form method="post" action="/signout">
              <button type="submit" className="btn-quiet whitespace-nowrap" data-testid="sign-out">
                Sign out
              </button>
            </Form>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full min-w-0 max-w-7xl flex-1 px-4 py-8 2xl:max-w-[110rem]">{children}</main>
    </div>
  );
}
