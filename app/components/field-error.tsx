export function FieldError({ id, message }: { id: string; message?: string | null }) {
  if (!message) return null;
  return (
    <p id={id} className="mt-1 text-sm text-fail" role="alert">
      {message}
    </p>
  );
}

// A message for the whole form, above it: one that no single field can carry.
export function FormError({ message, testId }: { message?: string | null; testId?: string }) {
  if (!message) return null;
  return (
    <p role="alert" className="rounded-[var(--radius-card)] border border-fail px-3 py-2 text-sm text-fail" data-testid={testId}>
      {message}
    </p>
  );
}

// The attributes that tie an input to its message for screen readers.
export function invalidProps(id: string, message?: string | null) {
  return message ? { "aria-invalid": true as const, "aria-describedby": id } : {};
}
