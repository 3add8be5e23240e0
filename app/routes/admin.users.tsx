import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/admin.users";
import { changeRole, fieldErrors, inviteInput, inviteUser, listUsers, roleChangeInput, setActive, userChangeInput } from "~/.server/admin/users";
import { ROLES } from "~/.server/db/schema";
import { requireRole } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { readForm } from "~/.server/storage";
import { FieldError, FormError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "People · Admin · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const admin = await requireRole(request, "admin");
  const users = await listUsers();
  return {
    meId: admin.id,
    roles: ROLES,
    users: users.map((u) => ({ ...u, lastSignInAt: u.lastSignInAt?.toISOString() ?? null, createdAt: u.createdAt.toISOString() })),
  };
}

type ActionResult = { intent: string; errors: Record<string, string>; values: Record<string, string>; userId: number | null };

export async function action({ request }: Route.ActionArgs) {
  const admin = await requireRole(request, "admin");
  const form = await readForm(request);
  const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
  const intent = values.intent ?? "";
  const fail = (errors: Record<string, string>, userId: number | null = null) => data<ActionResult>({ intent, errors, values, userId }, { status: 400 });
  if (intent === "invite") {
    const parsed = inviteInput.safeParse(values);
    if (!parsed.success) return fail(fieldErrors(parsed.error));
    const result = await inviteUser(admin, parsed.data, request);
    if (!result.ok) return fail(result.errors);
    return redirectWithFlash(request, "/admin/users", { kind: "ok", message: result.notice ?? "Invited." });
  }
  if (intent === "role") {
    const parsed = roleChangeInput.safeParse(values);
    if (!parsed.success) {
      const errors = fieldErrors(parsed.error);
      if (errors.userId || errors.version) return fail({ form: "Reload the page and try again: that person or version is not one this page showed." });
      return fail({ row: Object.values(errors)[0] }, Number(values.userId) || null);
    }
    const result = await changeRole(admin, parsed.data, request);
    if (!result.ok) return fail(result.errors, parsed.data.userId);
    return redirectWithFlash(request, "/admin/users", { kind: "ok", message: result.notice ?? "Saved." });
  }
  if (intent === "deactivate" || intent === "reactivate") {
    const parsed = userChangeInput.safeParse(values);
    if (!parsed.success) return fail({ form: "Reload the page and try again." });
    const result = await setActive(admin, { ...parsed.data, active: intent === "reactivate" }, request);
    if (!result.ok) return fail(result.errors, parsed.data.userId);
    return redirectWithFlash(request, "/admin/users", { kind: "ok", message: result.notice ?? "Saved." });
  }
  return fail({ form: "Unknown request." });
}

function when(iso: string | null) {
  return iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)}` : "never";
}

export default function AdminUsers({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const invite = actionData?.intent === "invite" ? actionData : null;
  const e = invite?.errors ?? {};
  return (
    <section className="space-y-6" aria-labelledby="users-title">
      <h1 id="users-title" className="text-2xl font-semibold tracking-tight">People</h1>
      <FormError message={actionData?.errors.form} testId="form-error" />

      <Form key={loaderData.users.length} method="post" className="card grid gap-4 p-5 md:grid-cols-[1.3fr_1fr_10rem_auto]" noValidate aria-labelledby="invite-title">
        <h2 id="invite-title" className="font-semibold md:col-span-4">Invite someone</h2>
        <input type="hidden" name="intent" value="invite" />
        <div>
          <label htmlFor="invite-email" className="label">E-mail address</label>
          <input id="invite-email" name="email" type="email" defaultValue={invite?.values.email ?? ""} className="field mt-1" {...invalidProps("invite-email-error", e.email)} />
          <FieldError id="invite-email-error" message={e.email} />
        </div>
        <div>
          <label htmlFor="invite-name" className="label">Name</label>
          <input id="invite-name" name="name" defaultValue={invite?.values.name ?? ""} className="field mt-1" {...invalidProps("invite-name-error", e.name)} />
          <FieldError id="invite-name-error" message={e.name} />
        </div>
        <div>
          <label htmlFor="invite-role" className="label">Role</label>
          <select id="invite-role" name="role" defaultValue={invite?.values.role ?? "reader"} className="field mt-1" {...invalidProps("invite-role-error", e.role)}>
            {loaderData.roles.map((r) => <option key={r} value={r}>{r}</option>)}
          </select>
          <FieldError id="invite-role-error" message={e.role} />
        </div>
        <div className="md:pt-5">
          <button type="submit" className="btn-primary" disabled={navigation.state === "submitting"}>Send invitation</button>
        </div>
        <p className="text-xs text-muted md:col-span-4">
          Readers look up values and download sets; contributors also propose changes; leads approve proposals in the families assigned to them; admins manage the team.
        </p>
      </Form>

      {loaderData.users.length === 0 ? (
        <p className="text-muted">Nobody has an account yet. Invite the first person above.</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-muted uppercase">
              <tr>
                <th className="px-3 py-2">Person</th><th className="px-3">Role</th><th className="px-3">Leads</th><th className="px-3">Last sign-in</th><th className="px-3">Status</th>
              </tr>
            </thead>
            <tbody>
              {loaderData.users.map((u) => {
                const rowError = actionData?.userId === u.id ? actionData.errors.row : null;
                return (
                  <tr key={u.id} className={`border-t border-rule align-top ${u.active ? "" : "text-muted"}`} data-user={u.email}>
                    <td className="px-3 py-2">
                      <span className="block font-medium">{u.name}{u.id === loaderData.meId ? " (you)" : ""}</span>
                      <span className="block text-xs text-muted">{u.email}</span>
                      {rowError ? <p className="mt-1 text-sm text-fail" role="alert">{rowError}</p> : null}
                    </td>
                    <td className="px-3 py-2">
                      <Form method="post" className="flex items-center gap-2">
                        <input type="hidden" name="intent" value="role" />
                        <input type="hidden" name="userId" value={u.id} />
                        <input type="hidden" name="version" value={u.version} />
                        <select name="role" defaultValue={u.role} className="field w-32 py-1" aria-label={`Role of ${u.name}`}>
                          {loaderData.roles.map((r) => <option key={r} value={r}>{r}</option>)}
                        </select>
                        <button type="submit" className="btn py-1 text-xs">Change</button>
                      </Form>
                    </td>
                    <td className="px-3 py-2 text-xs">{u.leads.length ? u.leads.map((l) => l.name).join(", ") : "—"}</td>
                    <td className="px-3 py-2 text-xs tabular-nums">{when(u.lastSignInAt)}</td>
                    <td className="px-3 py-2">
                      <Form method="post" className="flex items-center gap-2">
                        <input type="hidden" name="intent" value={u.active ? "deactivate" : "reactivate"} />
                        <input type="hidden" name="userId" value={u.id} />
                        <input type="hidden" name="version" value={u.version} />
                        <span className={`text-xs ${u.active ? "text-pass" : "text-muted"}`}>{u.active ? "active" : "deactivated"}</span>
                        <button type="submit" className="btn py-1 text-xs" aria-label={`${u.active ? "Deactivate" : "Reactivate"} ${u.name}`}>
                          {u.active ? "Deactivate" : "Reactivate"}
                        </button>
                      </Form>
                    </td>
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
