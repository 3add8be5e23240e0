import { data, Form } from "react-router";
import type { Route } from "./+types/admin.tolerances";
import { listTolerances, setTolerance, toleranceInput } from "~/.server/checks";
import { requireRole } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { readForm } from "~/.server/storage";
import { FieldError, FormError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Check tolerances · Admin · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  return { tolerances: await listTolerances() };
}

type ActionResult = { errors: Record<string, string>; values: Record<string, string> };

export async function action({ request }: Route.ActionArgs) {
  const admin = await requireRole(request, "admin");
  const form = await readForm(request);
  const values = { quantity: String(form.get("quantity") ?? ""), tolerance: String(form.get("tolerance") ?? "") };
  const parsed = toleranceInput.safeParse(values);
  if (!parsed.success) {
    const errors: Record<string, string> = {};
    for (const issue of parsed.error.issues) errors[String(issue.path[0] ?? "form")] ??= issue.message;
    return data<ActionResult>({ errors, values }, { status: 400 });
  }
  const result = await setTolerance(admin, parsed.data, request);
  if (!result.ok) return data<ActionResult>({ errors: result.errors, values }, { status: 400 });
  return redirectWithFlash(request, "/admin/tolerances", { kind: "ok", message: result.notice });
}

export default function AdminTolerances({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <section className="space-y-6" aria-labelledby="tolerances-title">
      <div>
        <p className="label">
          <a href="/admin">Admin</a>
        </p>
        <h1 id="tolerances-title" className="mt-1 text-2xl font-semibold tracking-tight">Check tolerances</h1>
        <p className="mt-2 max-w-3xl text-sm text-muted">
          How far a stated value may stand from what the physics implies and still pass. A check passes within its tolerance; the
          nearly-free-electron, Kane, bowing and pseudopotential checks warn up to three times it and fail beyond, the Varshni check fails beyond it.
          Every change is written to the audit log.
        </p>
      </div>
      {actionData && !loaderData.tolerances.some((t) => t.quantityKey === actionData.values.quantity) ? (
        // A quantity no row shows: its message has no field to stand at.
        <FormError message={actionData.errors.quantity ?? actionData.errors.tolerance ?? Object.values(actionData.errors)[0]} testId="form-error" />
      ) : null}
      <div className="card overflow-x-auto">
        <table className="w-full text-left text-sm">
          <thead className="text-xs text-muted uppercase">
            <tr>
              <th className="px-3 py-2">Quantity</th>
              <th className="px-3">Used by</th>
              <th className="px-3">Tolerance</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.tolerances.map((t) => {
              const mine = actionData?.values.quantity === t.quantityKey ? actionData : null;
              const error = mine?.errors.tolerance ?? mine?.errors.quantity;
              const id = `tolerance-${t.quantityKey}`;
              return (
                <tr key={t.quantityKey} className="border-t border-rule align-top" data-quantity={t.quantityKey}>
                  <td className="px-3 py-3">
                    <span className="font-medium">{t.name}</span> <span className="font-mono text-muted">{t.symbol}</span>
                  </td>
                  <td className="px-3 py-3 text-muted">
                    {t.usedBy}
                    <span className="block text-xs">
                      {t.mode === "absolute" ? `absolute, in ${t.unit}` : "relative"}; default {t.defaultValue}
                      {t.stored === null ? " (in use)" : ""}
                    </span>
                  </td>
                  <td className="px-3 py-3">
                    <Form method="post" className="flex flex-wrap items-center gap-2" noValidate>
                      <input type="hidden" name="quantity" value={t.quantityKey} />
                      <label htmlFor={id} className="sr-only">Tolerance of {t.name.toLowerCase()}</label>
                      <input
                        id={id}
                        name="tolerance"
                        inputMode="decimal"
                        defaultValue={mine?.values.tolerance ?? t.stored ?? t.defaultValue}
                        className="field w-32 py-1 font-mono"
                        {...invalidProps(`${id}-error`, error)}
                      />
                      {t.unit ? <span className="text-muted">{t.unit}</span> : null}
                      <button type="submit" className="btn py-1 text-xs">Save</button>
                    </Form>
                    <FieldError id={`${id}-error`} message={error} />
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </section>
  );
}
