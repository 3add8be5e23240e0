import { data } from "react-router";
import type { Route } from "./+types/uploads";
import { requireRole } from "~/.server/permissions";
import { redirectWithFlash } from "~/.server/session";
import { readLimitedFormData, StorageError } from "~/.server/storage";
import { loadProposalCatalogue } from "~/.server/workflow/catalogue";
import { checkCsvUpload, submitCsvBatch } from "~/.server/workflow/csv-batches";
import { isWorkflowError, statusOf } from "~/.server/workflow/errors";
import { CsvUpload, type CsvResult } from "~/components/proposals/csv-upload";
import { MAX_CSV_BYTES, MAX_CSV_ROWS } from "~/domain/csv-proposals";

export const meta: Route.MetaFunction = () => [{ title: "Upload proposals · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  return { catalogue: await loadProposalCatalogue(), maxBytes: MAX_CSV_BYTES, maxRows: MAX_CSV_ROWS };
}

type ActionResult = { result: CsvResult | null; message: string | null };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  let form: FormData;
  try {
    form = await readLimitedFormData(request, MAX_CSV_BYTES + 64 * 1024);
  } catch (e) {
    if (e instanceof StorageError) return data<ActionResult>({ result: null, message: `${e.message} Split the file into several uploads.` }, { status: 413 });
    throw e;
  }
  const intent = String(form.get("intent") ?? "");
  const file = form.get("file");
  if (intent !== "check" && intent !== "submit") return data<ActionResult>({ result: null, message: "Unknown request." }, { status: 400 });
  if (!(file instanceof File) || file.name === "") return data<ActionResult>({ result: null, message: "Choose a CSV file first." }, { status: 400 });
  const bytes = new Uint8Array(await file.arrayBuffer());
  try {
    if (intent === "check") {
      const check = await checkCsvUpload(bytes);
      return data<ActionResult>({ result: { ...check, planned: undefined, checkedBy: "server" } as CsvResult, message: null });
    }
    const done = await submitCsvBatch(user, file.name.split(/[\\/]/).pop()!.slice(-200), bytes, request);
    if (!done.ok) return data<ActionResult>({ result: { ...done.check, planned: undefined, checkedBy: "server" } as CsvResult, message: "Nothing was proposed: fix the rows below and upload the file again." }, { status: 400 });
    return redirectWithFlash(request, `/uploads/${done.batchId}`, { kind: "ok", message: `${done.proposalIds.length} proposals submitted for review from ${file.name}.` });
  } catch (e) {
    if (isWorkflowError(e)) return data<ActionResult>({ result: null, message: e.message }, { status: statusOf(e) });
    if (e instanceof StorageError) return data<ActionResult>({ result: null, message: e.message }, { status: 400 });
    throw e;
  }
}

export default function Uploads({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <header>
        <p className="label">Proposals</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Propose many values from a CSV</h1>
        <p className="mt-1 max-w-2xl text-sm text-muted">Every row becomes a submitted proposal with its source, or, if any row is wrong, none does. The file is kept with the batch.</p>
      </header>
      <CsvUpload catalogue={loaderData.catalogue} maxBytes={loaderData.maxBytes} maxRows={loaderData.maxRows} serverResult={actionData?.result ?? null} serverMessage={actionData?.message ?? null} />
    </div>
  );
}
