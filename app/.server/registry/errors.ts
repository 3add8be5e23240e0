export type RegistryErrorCode = "not_found" | "stale" | "retired" | "invalid" | "duplicate" | "four_eyes";

/**
 * A refusal of the registry services, with what the caller needs to explain it: field messages for "invalid",
 * the record that moved on for "stale", the existing record for "duplicate".
 */
export class RegistryError extends Error {
  constructor(
    readonly code: RegistryErrorCode,
    message: string,
    readonly details: { fieldErrors?: Record<string, string>; recordId?: number; currentRevisionId?: number | null } = {},
  ) {
    super(message);
    this.name = "RegistryError";
  }
}

export function isRegistryError(e: unknown, code?: RegistryErrorCode): e is RegistryError {
  return e instanceof RegistryError && (code === undefined || e.code === code);
}
