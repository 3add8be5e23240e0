import { data, Form } from "react-router";
import type { Route } from "./+types/admin.families";
import { createFamily, familyCreateInput, familyRenameInput, listFamilies, renameFamily } from "~/.server/admin/families";
import { fieldErrors } from "~/.server/admin/users";
import { requireRole } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { readForm } from "~/.server/storage";
import { FieldError, FormError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Material families · Admin · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  return { families: await listFamilies() };
}

type ActionResult = { intent: string; errors: Record<string, string>; values: Record<string, string>; familyId: number | null };

export async function action({ request }: Route.ActionArgs) {
  const admin = await requireRole(request, "admin");
  const form = await readForm(request);
  const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
  const intent = values.intent ?? "";
  const fail = (errors: Record<string, string>, familyId: number | null = null) => data<ActionResult>({ intent, errors, values, familyId }, { status: 400 });
  if (intent === "create") {
    const parsed = familyCreateInput.safeParse(values);
    if (!parsed.success) return fail(fieldErrors(parsed.error));
    const result = await createFamily(admin, parsed.data, request);
    if (!result.ok) return fail(result.errors);
    return redirectWithFlash(request, "/admin/families", { kind: "ok", message: result.notice ?? "Created." });
  }
  if (intent === "rename") {
    const parsed = familyRenameInput.safeParse(values);
    if (!parsed.success) {
      const errors = fieldErrors(parsed.error);
      // No row shows a message for a family id we never handed out: the page says it at the top.
      if (errors.familyId) return fail({ form: "Reload the page and try again: that family is not in the list." });
      return fail(errors, Number(values.familyId) || null);
    }
    const result = await renameFamily(admin, parsed.data, request);
    if (!result.ok) return fail(result.errors, parsed.data.familyId);
    return redirectWithFlash(request, "/admin/families", { kind: "ok", message: result.notice ?? "Renamed." });
  }
  return fail({ form: "Unknown request." });
}

export default function AdminFamilies({ loaderData, actionData }: Route.ComponentProps) {
  const create = actionData?.intent === "create" ? actionData : null;
  const e = create?.errors ?? {};
  return (
    <section className="space-y-6" aria-labelledby="families-title">
      <h1 id="families-title" className="text-2xl font-semibold tracking-tight">Material families</h1>
      <FormError message={actionData?.errors.form} testId="form-error" />
      <p className="text-sm text-muted">Every material belongs to one family; the leads of a family approve the proposals for its records. The key appears in addresses and never changes; the name can.</p>

      <Form key={loaderData.families.length} method="post" className="card grid gap-4 p-5 md:grid-cols-[10rem_1fr_1.4fr_auto]" noValidate aria-labelledby="create-family-title">
        <h2 id="create-family-title" className="font-semibold md:col-span-4">New family</h2>
        <input type="hidden" name="intent" value="create" />
        <div>
          <label htmlFor="family-key" className="label">Key</label>
          <input id="family-key" name="key" defaultValue={create?.values.key ?? ""} placeholder="e.g. oxides" className="field mt-1 font-mono" {...invalidProps("family-key-error", e.key)} />
          <FieldError id="family-key-error" message={e.key} />
        </div>
        <div>
          <label htmlFor="family-name" className="label">Name</label>
          <input id="family-name" name="name" defaultValue={create?.values.name ?? ""} placeholder="e.g. Oxides" className="field mt-1" {...invalidProps("family-name-error", e.name)} />
          <FieldError id="family-name-error" message={e.name} />
        </div>
        <div>
          <label htmlFor="family-description" className="label">Description (optional)</label>
          <input id="family-description" name="description" defaultValue={create?.values.description ?? ""} placeholder="e.g. ZnO, Ga₂O₃ and their alloys" className="field mt-1" {...invalidProps("family-description-error", e.description)} />
          <FieldError id="family-description-error" message={e.description} />
        </div>
        <div className="md:pt-5">
          <button type="submit" className="btn-primary">Create family</button>
        </div>
      </Form>

      {loaderData.families.length === 0 ? (
        <p className="text-muted">No material families yet. Create the first one above; materials and their records are filed under a family.</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-muted uppercase">
              <tr><th className="px-3 py-2">Key</th><th className="px-3">Name</th><th className="px-3">Leads</th></tr>
            </thead>
            <tbody>
              {loaderData.families.map((f) => {
                const rowError = actionData?.intent === "rename" && actionData.familyId === f.id ? actionData.errors.name : null;
                return (
                  <tr key={f.id} className="border-t border-rule align-top">
                    <td className="px-3 py-2 font-mono text-xs">{f.key}</td>
                    <td className="px-3 py-2">
                      <Form method="post" className="flex flex-wrap items-center gap-2">
                        <input type="hidden" name="intent" value="rename" />
                        <input type="hidden" name="familyId" value={f.id} />
                        <input name="name" defaultValue={f.name} className="field w-56 py-1" aria-label={`Name of ${f.key}`} {...invalidProps(`rename-${f.id}-error`, rowError)} />
                        <button type="submit" className="btn py-1 text-xs">Rename</button>
                      </Form>
                      <FieldError id={`rename-${f.id}-error`} message={rowError} />
                      {f.description ? <p className="mt-1 text-xs text-muted">{f.description}</p> : null}
                    </td>
                    <td className="px-3 py-2 text-xs">{f.leads.length ? f.leads.map((l) => l.name).join(", ") : <span className="text-warn">no lead yet</span>}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
