import { data, Form, Link, useNavigation } from "react-router";
import type { Route } from "./+types/proposals.$id";
import { requireLeadOf, requireUser } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { MAX_ATTACHMENT_BYTES, readLimitedFormData, StorageError } from "~/.server/storage";
import { attachFile } from "~/.server/workflow/attachments";
import { decideProposal } from "~/.server/workflow/decide";
import { isWorkflowError, statusOf } from "~/.server/workflow/errors";
import { addComment, carryForwardProposal, withdrawProposal } from "~/.server/workflow/proposals";
import { familyOfProposal, loadProposalPage } from "~/.server/workflow/views";
import { FieldError, FormError, invalidProps } from "~/components/field-error";
import { ConsistencyChecks } from "~/components/proposals/consistency-checks";
import { ProposalStateBadge, StaleBadge } from "~/components/proposals/proposal-state";
import { RevisionCard } from "~/components/proposals/revision-card";
import { formatBytes } from "~/domain/csv-proposals";
import { commentSchema, decisionSchema, fieldErrorsOf, PROPOSAL_KIND_LABELS } from "~/domain/proposal-schemas";
import { positiveId } from "~/domain/registry-schemas";

export const meta: Route.MetaFunction = ({ data: d }) => [{ title: d ? `#${d.id} ${d.title} · Bandledger` : "Proposal · Bandledger" }];

function proposalId(params: { id?: string }): number {
  const id = positiveId.safeParse(params.id);
  if (!id.success) throw data({ message: "There is no such proposal." }, { status: 404 });
  return id.data;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const id = proposalId(params);
  try {
    return await loadProposalPage(user, id);
  } catch (e) {
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}

type ActionResult = { intent: string; errors: Record<string, string>; message: string | null; values: Record<string, string> };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request);
  const id = proposalId(params);
  const fail = (intent: string, status: number, message: string | null, errors: Record<string, string> = {}, values: Record<string, string> = {}) =>
    data<ActionResult>({ intent, errors, message, values }, { status });
  let form: FormData;
  try {
    form = await readLimitedFormData(request, MAX_ATTACHMENT_BYTES + 64 * 1024);
  } catch (e) {
    if (e instanceof StorageError) return fail("attach", 413, e.message);
    throw e;
  }
  const intent = String(form.get("intent") ?? "");
  const text = (name: string) => (typeof form.get(name) === "string" ? String(form.get(name)) : "");
  try {
    if (intent === "approve" || intent === "reject") {
      const familyId = await familyOfProposal(id);
      if (familyId === null) throw data({ message: "There is no such proposal." }, { status: 404 });
      const lead = await requireLeadOf(request, familyId);
      const parsed = decisionSchema.safeParse({ decision: intent, version: text("version"), reason: text("reason") });
      if (!parsed.success) {
        const errors = fieldErrorsOf(parsed.error);
        // The version is a hidden field: when it is not one we handed out, the page says so (it shows no field for it).
        return fail(intent, 400, errors.version ? "Reload the page and try again: the form did not say which version of the proposal it decides on." : null, errors, { reason: text("reason") });
      }
      const done = await decideProposal(lead, id, parsed.data, request);
      return redirectWithFlash(request, `/proposals/${id}`, {
        kind: "ok",
        message: done.state === "approved" ? `Approved: record ${done.recordId} now holds the new value (revision ${done.resultRevisionId}); the author has been told.` : "Rejected; the author has been told why.",
      });
    }
    if (intent === "remark") {
      const parsed = commentSchema.safeParse({ body: text("body") });
      if (!parsed.success) return fail(intent, 400, null, fieldErrorsOf(parsed.error), { body: text("body") });
      await addComment(user, id, parsed.data.body, request);
      return redirectWithFlash(request, `/proposals/${id}#remarks`, { kind: "ok", message: "Remark added; the others in the thread have been told." });
    }
    if (intent === "withdraw") {
      await withdrawProposal(user, id, request);
      return redirectWithFlash(request, `/proposals/${id}`, { kind: "ok", message: "Withdrawn. The proposal stays in your list; nothing in the registry changed." });
    }
    if (intent === "carry-forward") {
      const version = positiveId.safeParse(text("version"));
      if (!version.success) return fail(intent, 400, "Reload the page and try again.");
      const done = await carryForwardProposal(user, id, version.data, request);
      return redirectWithFlash(request, `/proposals/${id}`, { kind: "ok", message: `Carried forward onto revision ${done.baseRevisionId}: check that your value still holds against it.` });
    }
    if (intent === "attach") {
      const file = form.get("file");
      if (!(file instanceof File) || file.size === 0) return fail(intent, 400, null, { file: "Choose a file to attach." });
      await attachFile(user, id, file, request);
      const back = text("back") === "edit" ? `/proposals/${id}/edit` : `/proposals/${id}`;
      return redirectWithFlash(request, back, { kind: "ok", message: `“${file.name}” is kept with the proposal.` });
    }
    return fail(intent, 400, "Unknown request.");
  } catch (e) {
    if (isWorkflowError(e)) return fail(intent, statusOf(e), e.message, e.details.fieldErrors ?? {}, { reason: text("reason"), body: text("body") });
    if (e instanceof StorageError) return fail(intent, 400, null, { file: e.message });
    throw e;
  }
}

function when(iso: string | null) {
  return iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` : "";
}

export default function ProposalPage({ loaderData: p, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const errors = actionData?.errors ?? {};
  const message = actionData?.message;
  return (
    <div className="space-y-6">
      <header className="space-y-2">
        <p className="label">
          Proposal #{p.id} · {PROPOSAL_KIND_LABELS[p.kind]}
          {p.batchId ? <> · from <Link to={`/uploads/${p.batchId}`}>upload {p.batchId}</Link></> : null}
        </p>
        <h1 className="text-2xl font-semibold tracking-tight">{p.title}</h1>
        <p className="figure font-mono text-sm">{p.change}</p>
        <p className="flex flex-wrap items-center gap-2 text-sm text-muted">
          <ProposalStateBadge state={p.state} />
          {p.stale ? <StaleBadge /> : null}
          <span>by {p.authorName}{p.submittedAt ? `, submitted ${when(p.submittedAt)}` : `, started ${when(p.createdAt)}`}</span>
          {p.material ? <span>· family {p.material.familyName}</span> : null}
          {p.recordId ? <span>· <Link to={`/records/${p.recordId}`}>record {p.recordId} and its history</Link></span> : null}
        </p>
      </header>

      <FormError message={message} testId="action-message" />

      {p.state === "approved" || p.state === "rejected" ? (
        <section className={`card border-l-4 p-4 ${p.state === "approved" ? "border-l-pass" : "border-l-fail"}`} aria-label="Decision">
          <p className="font-medium">{p.state === "approved" ? "Approved" : "Rejected"} by {p.deciderName} · {when(p.decidedAt)}</p>
          {p.reason ? <p className="mt-1 text-sm"><span className="text-muted">{p.state === "rejected" ? "Reason: " : "Note: "}</span>{p.reason}</p> : null}
          {p.state === "approved" && p.recordId ? <p className="mt-1 text-sm"><Link to={`/records/${p.recordId}`}>The value is live in the registry, the old one in the record's history.</Link></p> : null}
        </section>
      ) : null}

      {p.stale ? (
        <section role="alert" className="rounded-[var(--radius-card)] border border-warn bg-sheet p-4 text-sm" aria-label="Stale proposal">
          <p className="font-medium text-warn">The record has moved on since this proposal was written.</p>
          <p className="mt-1">
            It was based on <span className="figure font-mono">{p.stale.baseText}</span>; the record now holds{" "}
            <span className="figure font-mono" data-testid="stale-current">{p.stale.currentText}</span>
            {p.stale.currentRevisionId ? ` (revision ${p.stale.currentRevisionId})` : ""}. Nothing is overwritten silently: it cannot be approved until its author carries it forward to the current value. A lead may
            still reject it as it stands, with a reason, without asking for it to be carried forward first.
          </p>
          {p.can.carryForward ? (
            <Form method="post" className="mt-3">
              <input type="hidden" name="intent" value="carry-forward" />
              <input type="hidden" name="version" value={p.version} />
              <button type="submit" className="btn-primary" disabled={busy}>Carry forward to the current value</button>
            </Form>
          ) : null}
        </section>
      ) : null}

      <section className="grid gap-4 lg:grid-cols-2" aria-label="Current and proposed revision side by side">
        <RevisionCard
          title={`${p.currentRole === "replaced" ? "Replaced value" : "Current value"}${p.current?.seq ? ` (revision #${p.current.seq})` : ""}`}
          revision={p.current}
          tone="current"
          emptyText={p.currentRole === "replaced" ? "There was no record before: this proposal created it." : p.kind === "new_record" ? "No record yet: approving this proposal creates it." : "The record holds no revision."}
        />
        <RevisionCard title={p.kind === "retirement" ? "Proposed: retire the record" : p.state === "approved" ? "Approved value (now current)" : "Proposed value"} revision={p.proposed} tone="proposed" emptyText="Nothing proposed yet." />
      </section>
      {p.base ? (
        <details className="card p-3 text-sm">
          <summary className="cursor-pointer font-medium">The revision this proposal was based on</summary>
          <div className="mt-3"><RevisionCard title={`Base (revision #${p.base.seq})`} revision={p.base} tone="base" emptyText="" /></div>
        </details>
      ) : null}

      <ConsistencyChecks report={p.checkReport} />

      {p.state === "submitted" ? (
        <section className="card p-4" aria-labelledby="decide-title">
          <h2 id="decide-title" className="font-semibold">Decision</h2>
          {p.can.decideBlocked ? (
            <p className="mt-2 text-sm text-muted" data-testid="decide-blocked">{p.can.decideBlocked}</p>
          ) : (
            <div className="mt-3 grid gap-4 md:grid-cols-2">
              <Form method="post" className="space-y-2">
                <input type="hidden" name="intent" value="approve" />
                <input type="hidden" name="version" value={p.version} />
                <p className="text-sm text-muted">Approving makes the proposed value the record's current one; the old revision stays in its history.</p>
                <button type="submit" className="btn-primary" disabled={busy || !p.can.approve}>Approve</button>
                {!p.can.approve ? <p className="text-sm text-warn" data-testid="approve-blocked">Stale: approving waits until its author carries it forward. Rejecting is open now.</p> : null}
              </Form>
              <Form method="post" className="space-y-2" noValidate>
                <input type="hidden" name="intent" value="reject" />
                <input type="hidden" name="version" value={p.version} />
                <label htmlFor="reason" className="label">Reason for rejecting (the author reads it)</label>
                <textarea id="reason" name="reason" rows={3} required defaultValue={actionData?.values.reason ?? ""} className="field" {...invalidProps("reason-error", errors.reason)} />
                <FieldError id="reason-error" message={errors.reason} />
                <button type="submit" className="btn" disabled={busy}>Reject</button>
              </Form>
            </div>
          )}
        </section>
      ) : null}

      {p.can.withdraw || p.can.edit ? (
        <section className="flex flex-wrap items-center gap-3" aria-label="Your proposal">
          {p.can.edit ? <Link to={`/proposals/${p.id}/edit`} className="btn-primary no-underline">Edit the draft</Link> : null}
          {p.can.withdraw ? (
            <Form method="post">
              <input type="hidden" name="intent" value="withdraw" />
              <button type="submit" className="btn" disabled={busy}>Withdraw</button>
            </Form>
          ) : null}
        </section>
      ) : null}

      <section className="card p-4" aria-labelledby="files-title">
        <h2 id="files-title" className="label">Files</h2>
        {p.attachments.length ? (
          <ul className="mt-2 space-y-1 text-sm">
            {p.attachments.map((a) => (
              <li key={a.id}><a href={`/proposals/${p.id}/attachments/${a.id}`}>{a.fileName}</a> <span className="text-muted">({a.contentType.split(";")[0]}, {formatBytes(a.sizeBytes)})</span></li>
            ))}
          </ul>
        ) : (
          <p className="mt-2 text-sm text-muted">No files are attached.</p>
        )}
        {p.can.attach ? (
          <Form method="post" encType="multipart/form-data" className="mt-3 flex flex-wrap items-end gap-3">
            <input type="hidden" name="intent" value="attach" />
            <label className="block text-sm">
              <span className="label">Attach a PDF, CSV or text file (at most 10 MB)</span>
              <input type="file" name="file" accept=".pdf,.csv,.tsv,.txt,.dat,application/pdf,text/csv,text/plain" className="mt-1 block text-sm file:mr-3 file:rounded-[var(--radius-card)] file:border file:border-rule file:bg-sheet file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-ink hover:file:border-teal" {...invalidProps("file-error", errors.file)} />
            </label>
            <button type="submit" className="btn" disabled={busy}>Attach</button>
            <FieldError id="file-error" message={errors.file} />
          </Form>
        ) : null}
      </section>

      <section id="remarks" className="card p-4" aria-labelledby="remarks-title">
        <h2 id="remarks-title" className="font-semibold">Remarks</h2>
        {p.comments.length === 0 ? <p className="mt-2 text-sm text-muted">No remarks yet.</p> : null}
        <ol className="mt-3 space-y-3">
          {p.comments.map((c) => (
            <li key={c.id} className="border-l-2 border-rule pl-3">
              <p className="text-xs text-muted">{c.authorName} · {when(c.createdAt)}</p>
              <p className="mt-0.5 text-sm whitespace-pre-wrap">{c.body}</p>
            </li>
          ))}
        </ol>
        {p.can.comment ? (
          <Form method="post" className="mt-4 space-y-2" noValidate>
            <input type="hidden" name="intent" value="remark" />
            <label htmlFor="body" className="label">Add a remark</label>
            <textarea id="body" name="body" rows={3} key={p.comments.length} defaultValue={actionData?.intent === "remark" ? actionData.values.body : ""} className="field" {...invalidProps("body-error", errors.body)} />
            <FieldError id="body-error" message={errors.body} />
            <button type="submit" className="btn" disabled={busy}>Add remark</button>
          </Form>
        ) : null}
      </section>
    </div>
  );
}
