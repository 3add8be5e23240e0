export function FieldError({ id, message }: { id: string; message?: string | null }) {
  if (!message) return null;
  return (
    <p id={id} className="mt-1 text-sm text-fail" role="alert">
      {message}
    </p>
  );
}

// The attributes that tie an input to its message for screen readers.
export function invalidProps(id: string, message?: string | null) {
  return message ? { "aria-invalid": true as const, "aria-describedby": id } : {};
}
