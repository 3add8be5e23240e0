export type SetErrorCode = "not_found" | "forbidden" | "conflict" | "invalid" | "not_eligible" | "invalid_request";

/** A refusal of the set services; `status` is the HTTP status the API and the pages answer with. */
export class SetError extends Error {
  constructor(
    readonly code: SetErrorCode,
    message: string,
    readonly field: string | null = null,
    readonly details: Record<string, unknown> = {},
  ) {
    super(message);
    this.name = "SetError";
  }

  get status(): number {
    return { not_found: 404, forbidden: 403, conflict: 409, invalid: 422, not_eligible: 422, invalid_request: 400 }[this.code];
  }
}

export function isSetError(e: unknown): e is SetError {
  return e instanceof SetError;
}
