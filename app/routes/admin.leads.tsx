import { data, Form } from "react-router";
import type { Route } from "./+types/admin.leads";
import { listFamilies } from "~/.server/admin/families";
import { assignLead, leadCandidates, leadInput, unassignLead } from "~/.server/admin/leads";
import { fieldErrors } from "~/.server/admin/users";
import { requireRole } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { readForm } from "~/.server/storage";
import { FieldError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Lead assignments · Admin · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  const [families, candidates] = await Promise.all([listFamilies(), leadCandidates()]);
  return { families, candidates };
}

type ActionResult = { intent: string; errors: Record<string, string>; values: Record<string, string> };

export async function action({ request }: Route.ActionArgs) {
  const admin = await requireRole(request, "admin");
  const form = await readForm(request);
  const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
  const intent = values.intent ?? "";
  const fail = (errors: Record<string, string>) => data<ActionResult>({ intent, errors, values }, { status: 400 });
  if (intent !== "assign" && intent !== "unassign") return fail({ form: "Unknown request." });
  const parsed = leadInput.safeParse(values);
  if (!parsed.success) return fail(fieldErrors(parsed.error));
  const result = intent === "assign" ? await assignLead(admin, parsed.data, request) : await unassignLead(admin, parsed.data, request);
  if (!result.ok) return fail(result.errors);
  return redirectWithFlash(request, "/admin/leads", { kind: "ok", message: result.notice ?? "Saved." });
}

export default function AdminLeads({ loaderData, actionData }: Route.ComponentProps) {
  const { families, candidates } = loaderData;
  const e = actionData?.intent === "assign" ? actionData.errors : {};
  const v = actionData?.intent === "assign" ? actionData.values : {};
  return (
    <section className="space-y-6" aria-labelledby="leads-title">
      <h1 id="leads-title" className="text-2xl font-semibold tracking-tight">Lead assignments</h1>
      <p className="text-sm text-muted">A lead approves or rejects proposals for the families assigned here, never their own. Only people with the lead role can be assigned; admins may act in every family.</p>

      {candidates.length === 0 || families.length === 0 ? (
        <p className="card p-4 text-sm text-muted">
          {families.length === 0 ? "There are no material families yet; create one on the families page first." : "Nobody has the lead role yet. Give someone the lead role on the people page, then assign them here."}
        </p>
      ) : (
        <Form key={families.reduce((n, f) => n + f.leads.length, 0)} method="post" className="card grid gap-4 p-5 md:grid-cols-[1fr_1fr_auto]" noValidate aria-labelledby="assign-title">
          <h2 id="assign-title" className="font-semibold md:col-span-3">Assign a lead</h2>
          <input type="hidden" name="intent" value="assign" />
          <div>
            <label htmlFor="lead-user" className="label">Lead</label>
            <select id="lead-user" name="userId" defaultValue={v.userId ?? ""} className="field mt-1" {...invalidProps("lead-user-error", e.userId)}>
              <option value="">Choose a lead…</option>
              {candidates.map((c) => <option key={c.id} value={c.id}>{c.name} ({c.email})</option>)}
            </select>
            <FieldError id="lead-user-error" message={e.userId} />
          </div>
          <div>
            <label htmlFor="lead-family" className="label">Material family</label>
            <select id="lead-family" name="familyId" defaultValue={v.familyId ?? ""} className="field mt-1" {...invalidProps("lead-family-error", e.familyId)}>
              <option value="">Choose a family…</option>
              {families.map((f) => <option key={f.id} value={f.id}>{f.name}</option>)}
            </select>
            <FieldError id="lead-family-error" message={e.familyId} />
          </div>
          <div className="md:pt-5">
            <button type="submit" className="btn-primary">Assign</button>
          </div>
        </Form>
      )}

      {families.length > 0 ? (
        <div className="grid gap-4 sm:grid-cols-2">
          {families.map((f) => (
            <div key={f.id} className="card p-4" data-family={f.key}>
              <h2 className="font-semibold">{f.name}</h2>
              {f.leads.length === 0 ? (
                <p className="mt-1 text-sm text-warn">No lead yet: proposals in this family cannot be approved.</p>
              ) : (
                <ul className="mt-2 space-y-1 text-sm">
                  {f.leads.map((l) => (
                    <li key={l.id} className="flex items-center justify-between gap-2">
                      <span>{l.name}</span>
                      <Form method="post">
                        <input type="hidden" name="intent" value="unassign" />
                        <input type="hidden" name="userId" value={l.id} />
                        <input type="hidden" name="familyId" value={f.id} />
                        <button type="submit" className="btn py-0.5 text-xs" aria-label={`Remove ${l.name} as lead of ${f.name}`}>Remove</button>
                      </Form>
                    </li>
                  ))}
                </ul>
              )}
            </div>
          ))}
        </div>
      ) : null}
    </section>
  );
}
