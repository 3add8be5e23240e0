import { data, Form, redirect } from "react-router";
import type { Route } from "./+types/sets.new";
import { forbidden, hasRole, requireUser } from "~/.server/permissions";
import { createSet } from "~/.server/sets/service";
import { readForm } from "~/.server/storage";
import { FieldError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "New parameter set · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  if (!hasRole(user, "contributor")) forbidden("Contributors, leads and admins create sets.");
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  if (!hasRole(user, "contributor")) forbidden("Contributors, leads and admins create sets.");
  const values = Object.fromEntries([...(await readForm(request)).entries()].map(([k, v]) => [k, String(v)]));
  const result = await createSet(user, values, request);
  if (!result.ok) return data({ errors: result.errors, values }, { status: 400 });
  return redirect(`/sets/${result.set.slug}`);
}

export default function NewSet({ actionData }: Route.ComponentProps) {
  const errors: Record<string, string | undefined> = actionData?.errors ?? {};
  const values: Record<string, string | undefined> = actionData?.values ?? {};
  return (
    <div className="mx-auto max-w-2xl space-y-6">
      <header>
        <p className="label"><a href="/sets">Parameter sets</a></p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">New parameter set</h1>
        <p className="mt-1 text-sm text-muted">Name the set after what it feeds. You add records next; a lead freezes it into releases.</p>
      </header>
      <Form method="post" className="card space-y-4 p-5" noValidate>
        <div>
          <label htmlFor="name" className="label">Name</label>
          <input id="name" name="name" className="field mt-1" defaultValue={values.name} placeholder="HEMT baseline" required {...invalidProps("name-error", errors.name)} />
          <FieldError id="name-error" message={errors.name} />
        </div>
        <div>
          <label htmlFor="slug" className="label">Short name (address and file names)</label>
          <input id="slug" name="slug" className="field mt-1 font-mono" defaultValue={values.slug} placeholder="made from the name, e.g. hemt-baseline" {...invalidProps("slug-error", errors.slug)} />
          <FieldError id="slug-error" message={errors.slug} />
        </div>
        <div>
          <label htmlFor="purpose" className="label">Purpose</label>
          <input id="purpose" name="purpose" className="field mt-1" defaultValue={values.purpose} placeholder="AlGaAs/GaAs HEMT drift-diffusion runs" required {...invalidProps("purpose-error", errors.purpose)} />
          <FieldError id="purpose-error" message={errors.purpose} />
        </div>
        <div>
          <label htmlFor="description" className="label">Description</label>
          <textarea id="description" name="description" rows={4} className="field mt-1" defaultValue={values.description} {...invalidProps("description-error", errors.description)} />
          <FieldError id="description-error" message={errors.description} />
        </div>
        <div className="flex gap-3">
          <button type="submit" className="btn-primary">Create the set</button>
          <a href="/sets" className="btn no-underline">Cancel</a>
        </div>
      </Form>
    </div>
  );
}
