import { data } from "react-router";
import type { Route } from "./+types/proposals.$id.attachments.$attachmentId";
import { requireUser } from "~/.server/permissions";
import { readAttachment } from "~/.server/workflow/attachments";
import { isWorkflowError } from "~/.server/workflow/errors";
import { positiveId } from "~/domain/registry-schemas";

// Files are served as downloads with their checked type, never rendered inline, so an upload cannot run as a page.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const id = positiveId.safeParse(params.id);
  const attachmentId = positiveId.safeParse(params.attachmentId);
  if (!id.success || !attachmentId.success) throw data({ message: "Not a file address." }, { status: 400 });
  try {
    const file = await readAttachment(user, id.data, attachmentId.data);
    return new Response(new Uint8Array(file.bytes), {
      headers: {
        "Content-Type": file.contentType,
        "Content-Disposition": `attachment; filename="${file.fileName.replace(/[^\x20-\x7e]/g, "_")}"; filename*=UTF-8''${encodeURIComponent(file.fileName)}`,
        "X-Content-Type-Options": "nosniff",
        "Cache-Control": "private, max-age=0",
      },
    });
  } catch (e) {
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}
