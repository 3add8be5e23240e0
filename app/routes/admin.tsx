import { NavLink, Outlet } from "react-router";
import type { Route } from "./+types/admin";
import { requireRole } from "~/.server/permissions";

export const meta: Route.MetaFunction = () => [{ title: "Admin · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  return null;
}

const SECTIONS = [
  { to: "/admin", label: "Overview", end: true },
  { to: "/admin/users", label: "People" },
  { to: "/admin/families", label: "Material families" },
  { to: "/admin/leads", label: "Lead assignments" },
  { to: "/admin/audit", label: "Audit log" },
  { to: "/admin/tolerances", label: "Check tolerances" },
];

export default function AdminLayout() {
  return (
    <div className="grid gap-6 md:grid-cols-[12rem_1fr]">
      <nav aria-label="Admin" className="flex flex-row flex-wrap gap-1 md:flex-col">
        <p className="label mb-1 hidden md:block">Admin</p>
        {SECTIONS.map((s) => (
          <NavLink
            key={s.to}
            to={s.to}
            end={s.end}
            className={({ isActive }) => `rounded px-2.5 py-1.5 text-sm no-underline ${isActive ? "bg-copper-soft font-medium text-copper" : "text-ink hover:bg-teal-soft"}`}
          >
            {s.label}
          </NavLink>
        ))}
      </nav>
      <div className="min-w-0">
        <Outlet />
      </div>
    </div>
  );
}
