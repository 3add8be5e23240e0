import type { ReactNode } from "react";
import { Form, NavLink } from "react-router";
import { BandMark } from "./band-mark";

export type ShellUser = { name: string; email: string; role: "reader" | "contributor" | "lead" | "admin" } | null;

type NavItem = { to: string; label: string; minRole?: "reader" | "contributor" | "lead" | "admin" };

// Places for every area; each entry shows only to the roles that may use it.
const NAV: NavItem[] = [
  { to: "/registry", label: "Registry", minRole: "reader" },
  { to: "/materials", label: "Materials", minRole: "reader" },
  { to: "/sources", label: "Sources", minRole: "reader" },
  { to: "/proposals", label: "Proposals", minRole: "contributor" },
  { to: "/review", label: "Decisions", minRole: "lead" },
  { to: "/sets", label: "Sets", minRole: "reader" },
  { to: "/checks/nfe", label: "NFE check", minRole: "reader" },
  { to: "/checks/epm", label: "Crystal check", minRole: "reader" },
  { to: "/api-docs", label: "API", minRole: "reader" },
  { to: "/admin", label: "Admin", minRole: "admin" },
];

const RANK = { reader: 0, contributor: 1, lead: 2, admin: 3 } as const;

function visible(user: ShellUser) {
  if (!user) return [];
  return NAV.filter((n) => !n.minRole || RANK[user.role] >= RANK[n.minRole]);
}

function NavLinks({ user }: { user: ShellUser }) {
  return (
    <>
      {visible(user).map((n) => (
        <NavLink
          key={n.to}
          to={n.to}
          className={({ isActive }) =>
            `rounded px-2.5 py-1.5 text-sm font-medium no-underline ${isActive ? "bg-copper-soft text-copper" : "text-ink hover:bg-teal-soft"}`
          }
        >
          {n.label}
        </NavLink>
      ))}
    </>
  );
}

export function AppShell({ user, children }: { user: ShellUser; children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:bg-sheet focus:p-2">
        Skip to content
      </a>
      <header className="border-b-2 border-copper bg-sheet">
        <div className="mx-auto flex max-w-7xl items-center gap-4 px-4 py-2.5">
          <a href="/" className="flex items-center gap-2 text-ink no-underline" aria-label="Bandledger home">
            <BandMark />
            <span className="text-lg font-semibold tracking-tight">Bandledger</span>
          </a>
          <nav aria-label="Primary" className="hidden flex-1 flex-wrap items-center gap-1 lg:flex">
            <NavLinks user={user} />
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm" data-slot="user">
            {user ? (
              <>
                <a href="/account" className="hidden text-right no-underline sm:block">
                  <span className="block font-medium text-ink">{user.name}</span>
                  <span className="block text-xs text-muted">{user.role}</span>
                </a>
                <Form method="post" action="/sign-out">
                  <button type="submit" className="btn">Sign out</button>
                </Form>
              </>
            ) : (
              <a href="/sign-in" className="btn-primary no-underline">Sign in</a>
            )}
          </div>
        </div>
        {user ? (
          <details className="border-t border-rule px-4 py-1 lg:hidden">
            <summary className="cursor-pointer py-1 text-sm font-medium">Menu</summary>
            <nav aria-label="Primary (compact)" className="flex flex-col gap-1 pb-2">
              <NavLinks user={user} />
            </nav>
          </details>
        ) : null}
      </header>
      <main id="main" className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">
        {children}
      </main>
      <footer className="border-t border-rule py-4 text-center text-xs text-muted">
        Bandledger keeps band parameters for simulation. Confirm every value against your own measurements and qualification rules before a device decision.
      </footer>
    </div>
  );
}
