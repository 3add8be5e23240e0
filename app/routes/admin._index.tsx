import { Link } from "react-router";
import type { Route } from "./+types/admin._index";
import { adminOverview } from "~/.server/admin/overview";
import { requireRole } from "~/.server/permissions";

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  return adminOverview();
}

export default function AdminOverview({ loaderData: o }: Route.ComponentProps) {
  const cards = [
    { to: "/admin/users", title: "People", figure: o.activeUsers, text: `active · ${o.inactiveUsers} deactivated`, hint: "Invite, change roles, deactivate." },
    { to: "/admin/families", title: "Material families", figure: o.families, text: "families", hint: "Create and rename the families records belong to." },
    { to: "/admin/leads", title: "Lead assignments", figure: o.leadAssignments, text: "assignments", hint: "Who approves proposals in which family." },
    { to: "/admin/audit", title: "Audit log", figure: o.auditLastWeek, text: "entries in the last 7 days", hint: "Sign-ins, invitations, role changes and more." },
  ];
  return (
    <section aria-labelledby="admin-title">
      <h1 id="admin-title" className="text-2xl font-semibold tracking-tight">Team administration</h1>
      <div className="mt-4 grid gap-4 sm:grid-cols-2">
        {cards.map((c) => (
          <Link key={c.to} to={c.to} className="card block p-4 text-ink no-underline hover:border-teal">
            <h2 className="font-semibold">{c.title}</h2>
            <p className="mt-1"><span className="figure font-mono text-2xl">{c.figure}</span> <span className="text-sm text-muted">{c.text}</span></p>
            <p className="mt-1 text-sm text-muted">{c.hint}</p>
          </Link>
        ))}
      </div>
    </section>
  );
}
