export function FlashMessage({ flash }: { flash: { kind: "ok" | "error"; message: string } }) {
  return (
    <div
      role={flash.kind === "error" ? "alert" : "status"}
      className={`mb-4 rounded-[var(--radius-card)] border px-3 py-2 text-sm ${
        flash.kind === "error" ? "border-fail text-fail" : "border-pass text-pass"
      }`}
    >
      {flash.message}
    </div>
  );
}
