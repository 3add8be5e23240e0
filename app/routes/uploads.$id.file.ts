import { data } from "react-router";
import type { Route } from "./+types/uploads.$id.file";
import { requireRole } from "~/.server/permissions";
import { readStoredFile } from "~/.server/storage";
import { loadBatch } from "~/.server/workflow/csv-batches";
import { isWorkflowError } from "~/.server/workflow/errors";
import { positiveId } from "~/domain/registry-schemas";

// The file exactly as uploaded, kept for provenance; always a download, never shown inline.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const id = positiveId.safeParse(params.id);
  if (!id.success) throw data({ message: "Not an upload number." }, { status: 400 });
  try {
    const batch = await loadBatch(user, id.data);
    const bytes = await readStoredFile(batch.sha256);
    return new Response(new Uint8Array(bytes), {
      headers: {
        "Content-Type": "text/csv; charset=utf-8",
        "Content-Disposition": `attachment; filename="upload-${batch.id}.csv"; filename*=UTF-8''${encodeURIComponent(batch.fileName)}`,
        "X-Content-Type-Options": "nosniff",
        "Cache-Control": "private, max-age=0",
      },
    });
  } catch (e) {
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}
