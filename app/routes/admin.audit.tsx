import { Form, Link } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/admin.audit";
import { auditActions, auditActors, listAudit } from "~/.server/audit";
import { requireRole } from "~/.server/permissions";
import { FieldError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Audit log · Admin · Bandledger" }];

const PAGE_SIZE = 50;
const blank = (v: unknown) => (v === "" || v === null ? undefined : v);
const day = z.preprocess(blank, z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "Use a date such as 2025-03-14.").refine((s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)), "That is not a calendar date.").optional());
const filterFields = {
  action: z.preprocess(blank, z.string().max(64).optional()),
  actor: z.preprocess(blank, z.coerce.number().int().positive("Choose a person from the list.").optional()),
  from: day,
  to: day,
  page: z.preprocess(blank, z.coerce.number().int().min(1).optional()),
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  const params = new URL(request.url).searchParams;
  const raw = Object.fromEntries(Object.keys(filterFields).map((k) => [k, params.get(k) ?? ""]));
  const errors: Record<string, string> = {};
  const value: { [K in keyof typeof filterFields]?: z.infer<(typeof filterFields)[K]> } = {};
  for (const [k, schema] of Object.entries(filterFields) as [keyof typeof filterFields, z.ZodType][]) {
    const r = schema.safeParse(raw[k]);
    if (r.success) (value as Record<string, unknown>)[k] = r.data;
    else errors[k] = r.error.issues[0].message;
  }
  if (value.from && value.to && value.from > value.to) errors.to = "The end date is before the start date.";
  const from = value.from && !errors.from ? new Date(`${value.from}T00:00:00Z`) : undefined;
  const to = value.to && !errors.to ? new Date(Date.parse(`${value.to}T00:00:00Z`) + 86_400_000) : undefined;
  const [result, actions, actors] = await Promise.all([
    listAudit({ action: value.action, actorId: errors.actor ? undefined : value.actor, from, to, page: value.page ?? 1, pageSize: PAGE_SIZE }),
    auditActions(),
    auditActors(),
  ]);
  return {
    raw, errors, actions, actors,
    total: result.total, page: result.page, pageCount: result.pageCount,
    rows: result.rows.map((r) => ({ ...r, at: r.at.toISOString() })),
  };
}

function describe(detail: Record<string, unknown> | null): string {
  if (!detail) return "";
  return Object.entries(detail).map(([k, v]) => `${k}: ${typeof v === "object" && v !== null ? JSON.stringify(v) : String(v)}`).join(" · ");
}

function pageHref(raw: Record<string, string>, page: number) {
  const p = new URLSearchParams(Object.entries({ ...raw, page: String(page) }).filter(([, v]) => v !== ""));
  return `/admin/audit?${p.toString()}`;
}

export default function AdminAudit({ loaderData: d }: Route.ComponentProps) {
  const filtered = ["action", "actor", "from", "to"].some((k) => d.raw[k]);
  return (
    <section className="space-y-5" aria-labelledby="audit-title">
      <h1 id="audit-title" className="text-2xl font-semibold tracking-tight">Audit log</h1>
      <p className="text-sm text-muted">Every sign-in, sign-out, failed code, invitation, role change and token change, as written. The database refuses to change or delete an entry. Times are UTC.</p>

      <Form method="get" className="card grid gap-4 p-4 md:grid-cols-[1fr_1fr_9.5rem_9.5rem_auto]" aria-label="Filter the audit log">
        <div>
          <label htmlFor="f-action" className="label">Action</label>
          <select id="f-action" name="action" defaultValue={d.raw.action} className="field mt-1">
            <option value="">All actions</option>
            {d.actions.map((a) => <option key={a} value={a}>{a}</option>)}
          </select>
        </div>
        <div>
          <label htmlFor="f-actor" className="label">Who</label>
          <select id="f-actor" name="actor" defaultValue={d.raw.actor} className="field mt-1" {...invalidProps("f-actor-error", d.errors.actor)}>
            <option value="">Anyone</option>
            {d.actors.map((a) => <option key={a.id} value={a.id}>{a.name}</option>)}
          </select>
          <FieldError id="f-actor-error" message={d.errors.actor} />
        </div>
        <div>
          <label htmlFor="f-from" className="label">From</label>
          <input id="f-from" name="from" type="date" defaultValue={d.raw.from} className="field mt-1" {...invalidProps("f-from-error", d.errors.from)} />
          <FieldError id="f-from-error" message={d.errors.from} />
        </div>
        <div>
          <label htmlFor="f-to" className="label">To</label>
          <input id="f-to" name="to" type="date" defaultValue={d.raw.to} className="field mt-1" {...invalidProps("f-to-error", d.errors.to)} />
          <FieldError id="f-to-error" message={d.errors.to} />
        </div>
        <div className="flex items-end gap-2">
          <button type="submit" className="btn-primary">Filter</button>
          {filtered ? <Link to="/admin/audit" className="btn no-underline">Clear</Link> : null}
        </div>
      </Form>

      <p className="text-sm text-muted" data-testid="audit-count">
        {`${d.total === 0 ? "No entries" : `${d.total} ${d.total === 1 ? "entry" : "entries"}`}${filtered ? (d.total === 1 ? " matches the filter" : " match the filter") : ""}${d.pageCount > 1 ? ` · page ${d.page} of ${d.pageCount}` : ""}`}
      </p>

      {d.rows.length === 0 ? (
        <p className="card p-4 text-sm text-muted">{filtered ? "Nothing matches; widen the date range or clear the filter." : "Nothing has been recorded yet."}</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-muted uppercase">
              <tr><th className="px-3 py-2">When</th><th className="px-3">Who</th><th className="px-3">Action</th><th className="px-3">Concerning</th><th className="px-3">From</th><th className="px-3">Detail</th></tr>
            </thead>
            <tbody>
              {d.rows.map((r) => (
                <tr key={r.id} className="border-t border-rule align-top" data-action={r.action}>
                  <td className="px-3 py-1.5 whitespace-nowrap tabular-nums">{r.at.slice(0, 10)} {r.at.slice(11, 19)}</td>
                  <td className="px-3 py-1.5">{r.actorName ?? r.actorEmail ?? <span className="text-muted">system</span>}</td>
                  <td className="px-3 py-1.5 font-mono text-xs">{r.action}</td>
                  <td className="px-3 py-1.5 text-xs">{r.targetType ? `${r.targetType} ${r.targetId}` : "—"}</td>
                  <td className="px-3 py-1.5 font-mono text-xs">{r.ip ?? "—"}</td>
                  <td className="max-w-80 px-3 py-1.5 text-xs break-words text-muted">{describe(r.detail)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}

      {d.pageCount > 1 ? (
        <nav aria-label="Audit pages" className="flex items-center gap-3 text-sm">
          {d.page > 1 ? <Link to={pageHref(d.raw, d.page - 1)} className="btn no-underline">Newer</Link> : null}
          <span className="text-muted">Page {d.page} of {d.pageCount}</span>
          {d.page < d.pageCount ? <Link to={pageHref(d.raw, d.page + 1)} className="btn no-underline">Older</Link> : null}
        </nav>
      ) : null}
    </section>
  );
}
