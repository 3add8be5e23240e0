export type WorkflowErrorCode =
  | "not_found" // no such proposal (or not one this person may see)
  | "forbidden" // the person may not do this to this proposal
  | "invalid" // the proposal or the form has errors (fieldErrors)
  | "state" // the proposal is not in a state that allows this
  | "stale" // the record moved on since the proposal was based on it
  | "own_proposal" // four-eyes rule
  | "already_decided" // another decision won
  | "changed"; // the proposal changed since the page was loaded (version)

/** A refusal of the proposal services, with what a page needs to explain it. */
export class WorkflowError extends Error {
  constructor(
    readonly code: WorkflowErrorCode,
    message: string,
    readonly details: { fieldErrors?: Record<string, string>; recordId?: number; currentRevisionId?: number | null } = {},
  ) {
    super(message);
    this.name = "WorkflowError";
  }
}

export function isWorkflowError(e: unknown, code?: WorkflowErrorCode): e is WorkflowError {
  return e instanceof WorkflowError && (code === undefined || e.code === code);
}

/** The HTTP status a route answers a refusal with. */
export function statusOf(e: WorkflowError): number {
  switch (e.code) {
    case "not_found":
      return 404;
    case "forbidden":
    case "own_proposal":
      return 403;
    case "invalid":
      return 400;
    default:
      return 409;
  }
}
