import { data, Form } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sets.detail";
import { db } from "~/.server/db/client";
import { hasRole, requireUser } from "~/.server/permissions";
import { registryOptions } from "~/.server/registry/listing";
import { redirectWithFlash } from "~/.server/session";
import { isSetError } from "~/.server/sets/errors";
import { orSetErrorPage } from "~/.server/sets/http";
import { getsReleaseNotices, loadSetView } from "~/.server/sets/queries";
import { addMember, addMembersByFilter, candidateRows, freezeSet, removeMember, setReleaseNotices } from "~/.server/sets/service";
import { readForm } from "~/.server/storage";
import { FieldError } from "~/components/field-error";
import { conditionText, SinceMark, SourceText, ValueText } from "~/components/release-values";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.view.set.name ?? "Set"} · Bandledger` }];

const key = z.string().trim().max(64).regex(/^[A-Za-z0-9_().-]+$/);
const filterSchema = z.object({
  family: key.optional().catch(undefined),
  material: key.optional().catch(undefined),
  quantity: key.optional().catch(undefined),
  valley: z.enum(["G", "X", "L"]).optional().catch(undefined),
});
type Filter = z.infer<typeof filterSchema>;

function filterOf(entries: Record<string, string>): Filter {
  const clean = Object.fromEntries(Object.entries(entries).filter(([, v]) => v.trim() !== ""));
  return filterSchema.parse(clean);
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return orSetErrorPage(async () => {
    const view = await loadSetView(params.slug);
    const filter = filterOf(Object.fromEntries(new URL(request.url).searchParams));
    const searching = Boolean(filter.family || filter.material || filter.quantity || filter.valley);
    const options = await registryOptions(db());
    const candidates = searching && hasRole(user, "contributor") ? await candidateRows(params.slug, filter) : null;
    return {
      view,
      filter,
      options,
      candidates,
      getsNotices: await getsReleaseNotices(view.set.id, user.id),
      canEdit: hasRole(user, "contributor"),
      canFreeze: hasRole(user, "lead"),
    };
  });
}

type ActionResult = { intent: string; error: string; field: string | null };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = Object.fromEntries([...(await readForm(request)).entries()].map(([k, v]) => [k, String(v)]));
  const intent = form.intent ?? "";
  const here = `/sets/${params.slug}`;
  const fail = (status: number, error: string, field: string | null = null) => data<ActionResult>({ intent, error, field }, { status });
  try {
    switch (intent) {
      case "add-record": {
        const id = z.coerce.number().int().positive().safeParse(form.recordId);
        if (!id.success) return fail(400, "Enter a record number.", "recordId");
        const { added } = await addMember(user, params.slug, id.data, request);
        return redirectWithFlash(request, here + (form.back ?? ""), { kind: "ok", message: added ? `Record ${id.data} added.` : `Record ${id.data} is already in the set.` });
      }
      case "add-filter": {
        const { added, matched } = await addMembersByFilter(user, params.slug, filterOf(form), request);
        return redirectWithFlash(request, here, { kind: "ok", message: `${added} record${added === 1 ? "" : "s"} added (${matched} matched the filter).` });
      }
      case "remove": {
        const id = z.coerce.number().int().positive().safeParse(form.recordId);
        if (!id.success) return fail(400, "Unknown record.", "recordId");
        await removeMember(user, params.slug, id.data, request);
        return redirectWithFlash(request, here, { kind: "ok", message: `Record ${id.data} removed from the set.` });
      }
      case "freeze": {
        if (form.confirm !== "yes") return fail(400, "Tick the box to confirm that these values are the ones to freeze.", "confirm");
        const expectedVersion = z.coerce.number().int().positive().safeParse(form.expectedVersion);
        if (!expectedVersion.success) return fail(400, "Reload the page and try again.", "confirm");
        const written = await freezeSet(user, params.slug, { expectedVersion: expectedVersion.data }, request);
        return redirectWithFlash(request, `${here}/releases/${written.number}`, { kind: "ok", message: `Release ${written.number} frozen: ${written.itemCount} values, SHA-256 ${written.sha256.slice(0, 12)}…` });
      }
      case "notices-on":
      case "notices-off": {
        await setReleaseNotices(user, params.slug, intent === "notices-on", request);
        return redirectWithFlash(request, here, { kind: "ok", message: intent === "notices-on" ? "You will get a release notice each time this set is frozen." : "You no longer get release notices for this set." });
      }
      default:
        return fail(400, "Unknown request.");
    }
  } catch (e) {
    if (isSetError(e)) return fail(e.status, e.message, e.field);
    throw e;
  }
}

export default function SetDetail({ loaderData, actionData }: Route.ComponentProps) {
  const { view, filter, options, candidates, getsNotices, canEdit, canFreeze } = loaderData;
  const { set, members, releases, lastReleaseNumber, droppedSinceLastRelease } = view;
  const error = actionData?.error;
  const moved = members.filter((m) => m.sinceLastRelease && m.sinceLastRelease !== "unchanged").length + droppedSinceLastRelease.length;
  const nextNumber = (lastReleaseNumber ?? 0) + 1;
  const blocked = members.filter((m) => !m.current);
  return (
    <div className="space-y-8">
      <header className="flex flex-wrap items-start justify-between gap-4">
        <div>
          <p className="label"><a href="/sets">Parameter sets</a></p>
          <h1 className="mt-1 text-2xl font-semibold tracking-tight">{set.name}</h1>
          <p className="mt-1 text-muted">{set.purpose}</p>
          {set.description ? <p className="mt-2 max-w-3xl text-sm whitespace-pre-line">{set.description}</p> : null}
          <p className="mt-2 text-xs text-muted">
            <span className="font-mono">{set.slug}</span> · {set.memberCount} members · {releases.length ? `latest release ${releases[0].number}` : "never frozen"}
          </p>
        </div>
        <Form method="post">
          <input type="hidden" name="intent" value={getsNotices ? "notices-off" : "notices-on"} />
          <button type="submit" className="btn">{getsNotices ? "Stop release notices" : "Notify me of new releases"}</button>
        </Form>
      </header>

      {error && actionData?.field !== "confirm" && actionData?.field !== "recordId" ? <p role="alert" className="card border-fail p-3 text-sm text-fail">{error}</p> : null}

      <section aria-labelledby="members-title" className="space-y-3">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 id="members-title" className="text-lg font-semibold">Members</h2>
          {lastReleaseNumber ? (
            <p className="text-sm text-muted">
              {moved === 0 ? `Nothing moved since release ${lastReleaseNumber}.` : `${moved} moved since release ${lastReleaseNumber}.`}{" "}
              <a href={`/sets/${set.slug}/compare?from=${lastReleaseNumber}&to=current`}>Compare with the current registry</a>
            </p>
          ) : null}
        </div>
        {members.length === 0 ? (
          <p className="card p-4 text-sm text-muted">No members yet.{canEdit ? " Add records below, one by one or by a filter." : ""}</p>
        ) : (
          <div className="card overflow-x-auto">
            <table className="w-full text-sm">
              <thead className="border-b border-rule text-left text-xs text-muted uppercase">
                <tr>
                  <th className="px-3 py-2">Record</th>
                  <th className="px-3 py-2">Material</th>
                  <th className="px-3 py-2">Quantity</th>
                  <th className="px-3 py-2">Conditions</th>
                  <th className="px-3 py-2 text-right">Current value</th>
                  <th className="px-3 py-2">Source</th>
                  <th className="px-3 py-2">{lastReleaseNumber ? `Since release ${lastReleaseNumber}` : "Status"}</th>
                  {canEdit ? <th className="px-3 py-2"><span className="sr-only">Remove</span></th> : null}
                </tr>
              </thead>
              <tbody>
                {members.map((m) => (
                  <tr key={m.recordId} className="border-b border-rule align-top last:border-0" data-record={m.recordId}>
                    <td className="num px-3 py-2 font-mono text-xs text-muted">#{m.recordId}</td>
                    <td className="px-3 py-2 font-medium">{m.material.key}</td>
                    <td className="px-3 py-2">{m.quantity.symbol} <span className="text-xs text-muted">{m.quantity.name}</span></td>
                    <td className="px-3 py-2 text-muted">{m.current ? conditionText(m.current) : "—"}</td>
                    <td className="px-3 py-2 text-right">{m.current ? <ValueText item={m.current} /> : <span className="text-fail">retired</span>}</td>
                    <td className="px-3 py-2">{m.current ? <SourceText item={m.current} /> : "—"}</td>
                    <td className="px-3 py-2"><SinceMark since={m.sinceLastRelease} /></td>
                    {canEdit ? (
                      <td className="px-3 py-2">
                        <Form method="post">
                          <input type="hidden" name="intent" value="remove" />
                          <input type="hidden" name="recordId" value={m.recordId} />
                          <button type="submit" className="btn text-xs" aria-label={`Remove record ${m.recordId}`}>Remove</button>
                        </Form>
                      </td>
                    ) : null}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        {droppedSinceLastRelease.length ? (
          <p className="text-sm text-muted">Removed since release {lastReleaseNumber}: {droppedSinceLastRelease.map((d) => `#${d.recordId}`).join(", ")}.</p>
        ) : null}
      </section>

      {canEdit ? (
        <section aria-labelledby="add-title" className="card space-y-4 p-5">
          <h2 id="add-title" className="text-lg font-semibold">Add records</h2>
          <p className="text-sm text-muted">Only records with a current approved value can join. Filter to see them, then add one by one or all that match.</p>
          <Form method="get" className="flex flex-wrap items-end gap-3">
            <label className="text-sm">
              <span className="label">Family</span>
              <select name="family" defaultValue={filter.family ?? ""} className="field mt-1">
                <option value="">any</option>
                {options.families.map((f) => <option key={f.key} value={f.key}>{f.name}</option>)}
              </select>
            </label>
            <label className="text-sm">
              <span className="label">Material</span>
              <select name="material" defaultValue={filter.material ?? ""} className="field mt-1">
                <option value="">any</option>
                {options.materials.map((m) => <option key={m.key} value={m.key}>{m.key}</option>)}
              </select>
            </label>
            <label className="text-sm">
              <span className="label">Quantity</span>
              <select name="quantity" defaultValue={filter.quantity ?? ""} className="field mt-1">
                <option value="">any</option>
                {options.quantities.map((q) => <option key={q.key} value={q.key}>{q.symbol} — {q.name}</option>)}
              </select>
            </label>
            <label className="text-sm">
              <span className="label">Valley</span>
              <select name="valley" defaultValue={filter.valley ?? ""} className="field mt-1">
                <option value="">any</option>
                <option value="G">Γ</option>
                <option value="X">X</option>
                <option value="L">L</option>
              </select>
            </label>
            <button type="submit" className="btn">Show matching records</button>
          </Form>
          {candidates ? (
            candidates.total === 0 ? (
              <p className="text-sm text-muted">No record outside the set matches.</p>
            ) : (
              <div className="space-y-3">
                <Form method="post" className="flex items-center gap-3">
                  <input type="hidden" name="intent" value="add-filter" />
                  {Object.entries(filter).map(([k, v]) => (v ? <input key={k} type="hidden" name={k} value={v} /> : null))}
                  <button type="submit" className="btn-primary">Add all {candidates.total} matching</button>
                </Form>
                <div className="overflow-x-auto">
                  <table className="w-full text-sm">
                    <tbody>
                      {candidates.items.map((c) => (
                        <tr key={c.recordId} className="border-b border-rule align-top last:border-0">
                          <td className="px-2 py-1.5 font-mono text-xs text-muted">#{c.recordId}</td>
                          <td className="px-2 py-1.5 font-medium">{c.material.key} {c.quantity.symbol}</td>
                          <td className="px-2 py-1.5 text-muted">{conditionText(c)}</td>
                          <td className="px-2 py-1.5 text-right"><ValueText item={c} /></td>
                          <td className="px-2 py-1.5"><SourceText item={c} /></td>
                          <td className="px-2 py-1.5">
                            <Form method="post">
                              <input type="hidden" name="intent" value="add-record" />
                              <input type="hidden" name="recordId" value={c.recordId} />
                              <button type="submit" className="btn text-xs" aria-label={`Add record ${c.recordId}`}>Add</button>
                            </Form>
                          </td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                </div>
              </div>
            )
          ) : null}
          <Form method="post" className="flex flex-wrap items-end gap-3 border-t border-rule pt-4">
            <input type="hidden" name="intent" value="add-record" />
            <label className="text-sm">
              <span className="label">Record number</span>
              <input name="recordId" inputMode="numeric" className="field mt-1 w-32 font-mono" placeholder="e.g. 12" />
            </label>
            <button type="submit" className="btn">Add this record</button>
            {actionData?.field === "recordId" ? <FieldError id="record-error" message={error} /> : null}
          </Form>
        </section>
      ) : null}

      {canFreeze ? (
        <section aria-labelledby="freeze-title" className="card space-y-3 border-copper p-5">
          <h2 id="freeze-title" className="text-lg font-semibold">Freeze release {nextNumber}</h2>
          <p className="text-sm text-muted">
            Pins the {members.length - blocked.length} current values above into release {nextNumber} with a SHA-256 hash. A release never changes;
            later edits go into release {nextNumber + 1}.{lastReleaseNumber && moved === 0 ? ` Nothing moved since release ${lastReleaseNumber}: the values would be the same.` : ""}
          </p>
          {blocked.length ? <p className="text-sm text-fail">Remove the retired records first: {blocked.map((b) => `#${b.recordId}`).join(", ")}.</p> : null}
          <Form method="post" className="space-y-3">
            <input type="hidden" name="intent" value="freeze" />
            <input type="hidden" name="expectedVersion" value={set.version} />
            <label className="flex items-start gap-2 text-sm">
              <input type="checkbox" name="confirm" value="yes" className="mt-1" />
              <span>I have checked these {members.length - blocked.length} values and their sources; freeze them as release {nextNumber} of {set.name}.</span>
            </label>
            {actionData?.field === "confirm" ? <FieldError id="confirm-error" message={error} /> : null}
            <button type="submit" className="btn-primary" disabled={members.length === 0}>Freeze release {nextNumber}</button>
          </Form>
        </section>
      ) : null}

      <section aria-labelledby="releases-title" className="space-y-3">
        <h2 id="releases-title" className="text-lg font-semibold">Releases</h2>
        {releases.length === 0 ? (
          <p className="card p-4 text-sm text-muted">Not frozen yet. A lead or an admin freezes the set when its members are right.</p>
        ) : (
          <div className="card overflow-x-auto">
            <table className="w-full text-sm">
              <thead className="border-b border-rule text-left text-xs text-muted uppercase">
                <tr>
                  <th className="px-3 py-2">Release</th>
                  <th className="px-3 py-2">Frozen</th>
                  <th className="px-3 py-2 text-right">Values</th>
                  <th className="px-3 py-2">SHA-256</th>
                  <th className="px-3 py-2">Download</th>
                  <th className="px-3 py-2">Compare</th>
                </tr>
              </thead>
              <tbody>
                {releases.map((r) => (
                  <tr key={r.number} className="border-b border-rule last:border-0">
                    <td className="px-3 py-2 font-medium"><a href={`/sets/${set.slug}/releases/${r.number}`}>Release {r.number}</a></td>
                    <td className="px-3 py-2 text-muted">{r.frozenAt.slice(0, 10)} by {r.frozenBy}</td>
                    <td className="num px-3 py-2 text-right">{r.itemCount}</td>
                    <td className="px-3 py-2 font-mono text-xs" title={r.sha256}>{r.sha256.slice(0, 16)}…</td>
                    <td className="px-3 py-2"><a href={r.downloads.json} download>JSON</a> · <a href={r.downloads.csv} download>CSV</a></td>
                    <td className="px-3 py-2">{r.number > 1 ? <a href={`/sets/${set.slug}/compare?from=${r.number - 1}&to=${r.number}`}>with {r.number - 1}</a> : "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </div>
  );
}
