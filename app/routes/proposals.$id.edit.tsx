import { data, Form, Link, redirect, type ShouldRevalidateFunctionArgs } from "react-router";
import type { Route } from "./+types/proposals.$id.edit";
import { requireRole } from "~/.server/permissions";
import { isWorkflowError } from "~/.server/workflow/errors";
import { proposalFormAction } from "~/.server/workflow/form-action";
import { loadProposalForm } from "~/.server/workflow/views";
import { ProposalForm } from "~/components/proposals/proposal-form";
import { formatBytes } from "~/domain/csv-proposals";
import { positiveId } from "~/domain/registry-schemas";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Draft ${params.id} · Bandledger` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const id = positiveId.safeParse(params.id);
  if (!id.success) throw data({ message: "There is no such draft." }, { status: 404 });
  try {
    return await loadProposalForm(user, { draftId: id.data });
  } catch (e) {
    if (isWorkflowError(e, "state")) throw redirect(`/proposals/${id.data}`);
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}

export async function action({ request, params }: Route.ActionArgs) {
  const id = positiveId.safeParse(params.id);
  if (!id.success) throw data({ message: "There is no such draft." }, { status: 404 });
  return proposalFormAction(request, id.data);
}

export function shouldRevalidate({ formData, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return formData?.get("intent") === "autosave" ? false : defaultShouldRevalidate;
}

export default function EditDraft({ loaderData, actionData }: Route.ComponentProps) {
  const { proposalId, attachments } = loaderData;
  return (
    <div className="mx-auto max-w-5xl space-y-4">
      <header className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <p className="label">Draft #{proposalId}</p>
          <h1 className="mt-1 text-2xl font-semibold tracking-tight">
            {loaderData.kind === "new_record" ? "A new record" : loaderData.kind === "retirement" ? "Retire a record" : "A new value for a record"}
          </h1>
        </div>
        <Link to={`/proposals/${proposalId}`} className="text-sm">Preview as the leads see it</Link>
      </header>
      {loaderData.stale ? (
        <p role="alert" className="rounded-[var(--radius-card)] border border-warn px-3 py-2 text-sm text-warn">
          The record changed since this draft was started. <Link to={`/proposals/${proposalId}`}>Carry it forward</Link> to the current value before you submit.
        </p>
      ) : null}
      <ProposalForm
        action={`/proposals/${proposalId}/edit`}
        catalogue={loaderData.catalogue}
        kind={loaderData.kind}
        initial={loaderData.payload}
        proposalId={proposalId}
        record={loaderData.record}
        savedAt={loaderData.savedAt}
        actionData={actionData}
      />
      <section className="card p-4" aria-labelledby="files-title">
        <h2 id="files-title" className="label">Files kept with the proposal</h2>
        {attachments.length ? (
          <ul className="mt-2 space-y-1 text-sm">
            {attachments.map((a) => (
              <li key={a.id}><a href={`/proposals/${proposalId}/attachments/${a.id}`}>{a.fileName}</a> <span className="text-muted">({formatBytes(a.sizeBytes)})</span></li>
            ))}
          </ul>
        ) : (
          <p className="mt-2 text-sm text-muted">None yet. A PDF of the source or a measurement file (CSV or text) helps the reviewer.</p>
        )}
        <Form method="post" action={`/proposals/${proposalId}`} encType="multipart/form-data" className="mt-3 flex flex-wrap items-end gap-3">
          <input type="hidden" name="intent" value="attach" />
          <input type="hidden" name="back" value="edit" />
          <label className="block text-sm">
            <span className="label">File (PDF, CSV or text, at most 10 MB)</span>
            <input type="file" name="file" accept=".pdf,.csv,.tsv,.txt,.dat,application/pdf,text/csv,text/plain" className="mt-1 block text-sm file:mr-3 file:rounded-[var(--radius-card)] file:border file:border-rule file:bg-sheet file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-ink hover:file:border-teal" required />
          </label>
          <button type="submit" className="btn">Attach</button>
        </Form>
      </section>
    </div>
  );
}
