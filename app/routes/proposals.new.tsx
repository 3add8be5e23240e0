import { data, type ShouldRevalidateFunctionArgs } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/proposals.new";
import { requireRole } from "~/.server/permissions";
import { isWorkflowError } from "~/.server/workflow/errors";
import { proposalFormAction } from "~/.server/workflow/form-action";
import { loadProposalForm } from "~/.server/workflow/views";
import { ProposalForm } from "~/components/proposals/proposal-form";
import { PROPOSAL_KIND_KEYS } from "~/domain/proposal-schemas";

export const meta: Route.MetaFunction = () => [{ title: "New proposal · Bandledger" }];

const fromSchema = z.object({
  record: z.coerce.number().int().positive().max(2_147_483_647).optional().catch(undefined),
  kind: z.enum(PROPOSAL_KIND_KEYS).catch("new_record"),
});

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const query = fromSchema.parse(Object.fromEntries(new URL(request.url).searchParams));
  const kind = query.record ? (query.kind === "new_record" ? "revision" : query.kind) : "new_record";
  try {
    return await loadProposalForm(user, { recordId: query.record ?? null, kind });
  } catch (e) {
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}

export async function action({ request }: Route.ActionArgs) {
  return proposalFormAction(request, null);
}

// An autosave changes nothing the page shows; only a real submission reloads it.
export function shouldRevalidate({ formData, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  return formData?.get("intent") === "autosave" ? false : defaultShouldRevalidate;
}

const TITLES = { new_record: "Propose a new record", revision: "Propose a new value", retirement: "Propose to retire a record" } as const;

export default function NewProposal({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="mx-auto max-w-5xl space-y-4">
      <header>
        <p className="label">Proposals</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">{TITLES[loaderData.kind]}</h1>
        <p className="mt-1 text-sm text-muted">Every value needs its source and where in it the value stands. The draft is kept on the server as you type.</p>
      </header>
      <ProposalForm
        action={loaderData.record ? `/proposals/new?record=${loaderData.record.id}&kind=${loaderData.kind}` : "/proposals/new"}
        catalogue={loaderData.catalogue}
        kind={loaderData.kind}
        initial={loaderData.payload}
        proposalId={loaderData.proposalId}
        record={loaderData.record}
        savedAt={loaderData.savedAt}
        actionData={actionData}
      />
    </div>
  );
}
