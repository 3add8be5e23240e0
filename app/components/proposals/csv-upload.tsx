import { useEffect, useRef, useState } from "react";
import { Form, useNavigation } from "react-router";
import { checkProposalCsv, CSV_COLUMNS, DELIMITER_NAMES, formatBytes, previewRowOf, type CsvPreviewRow } from "~/domain/csv-proposals";
import type { ProposalCatalogue } from "~/domain/proposal-schemas";

export type CsvResult = { fileErrors: string[]; rows: CsvPreviewRow[]; errorCount: number; delimiter: string; hadByteOrderMark: boolean; checkedBy: "browser" | "server" };

function PreviewTable({ result }: { result: CsvResult }) {
  const good = result.rows.filter((r) => r.errors.length === 0).length;
  return (
    <section className="space-y-3" aria-labelledby="preview-title">
      <h2 id="preview-title" className="font-semibold">
        {result.errorCount === 0 ? `All ${good} rows can be proposed` : `${result.errorCount} problem${result.errorCount === 1 ? "" : "s"} to fix; nothing is proposed until every row is right`}
      </h2>
      <p className="text-sm text-muted">
        Checked {result.checkedBy === "browser" ? "in your browser (the server checks everything again when you submit)" : "by the server"} ·{" "}
        {DELIMITER_NAMES[result.delimiter] ?? "comma"}-separated{result.hadByteOrderMark ? " · UTF-8 with a byte-order mark" : " · UTF-8"}
      </p>
      {result.fileErrors.length ? (
        <ul className="list-disc space-y-1 pl-5 text-sm text-fail" role="alert" data-testid="file-errors">
          {result.fileErrors.map((e) => <li key={e}>{e}</li>)}
        </ul>
      ) : null}
      {result.rows.length ? (
        <div className="card max-h-[32rem] overflow-auto">
          <table className="w-full border-collapse text-sm" data-testid="csv-preview">
            <thead className="sticky top-0 bg-paper">
              <tr className="border-b border-rule text-left">
                <th scope="col" className="px-3 py-2 font-semibold">Row</th>
                <th scope="col" className="px-3 py-2 font-semibold">Material</th>
                <th scope="col" className="px-3 py-2 font-semibold">Quantity</th>
                <th scope="col" className="px-3 py-2 font-semibold">Conditions</th>
                <th scope="col" className="px-3 py-2 font-semibold">Value (as kept)</th>
                <th scope="col" className="px-3 py-2 font-semibold">Changes</th>
                <th scope="col" className="px-3 py-2 font-semibold">Problems</th>
              </tr>
            </thead>
            <tbody>
              {result.rows.map((r) => (
                <tr key={r.row} className={`border-b border-rule last:border-b-0 ${r.errors.length ? "bg-copper-soft/40" : ""}`}>
                  <td className="figure px-3 py-1.5 align-top">{r.row}</td>
                  <td className="px-3 py-1.5 align-top">{r.material}</td>
                  <td className="px-3 py-1.5 align-top">{r.quantity}</td>
                  <td className="px-3 py-1.5 align-top text-muted">{r.conditions}</td>
                  <td className="figure px-3 py-1.5 align-top font-mono text-xs">{r.value}</td>
                  <td className="px-3 py-1.5 align-top text-xs text-muted">{r.target ?? "—"}</td>
                  <td className="px-3 py-1.5 align-top">
                    {r.errors.length ? (
                      <ul className="space-y-0.5 text-xs text-fail">
                        {r.errors.map((e, i) => <li key={i}>{e.column ? <span className="font-semibold">{e.column}: </span> : null}{e.message}</li>)}
                      </ul>
                    ) : (
                      <span className="text-xs text-pass">ok</span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </section>
  );
}

/**
 * Upload of a proposal CSV: the browser reads and checks the chosen file at once, with a progress bar, and
 * previews every row with its problems; submitting sends the same file, which the server checks again before it
 * writes all the rows in one transaction or none. Without JavaScript the "Check" button asks the server instead.
 */
export function CsvUpload({ catalogue, maxBytes, maxRows, serverResult, serverMessage }: { catalogue: ProposalCatalogue; maxBytes: number; maxRows: number; serverResult: CsvResult | null; serverMessage: string | null }) {
  const [local, setLocal] = useState<CsvResult | null>(null);
  const [progress, setProgress] = useState<{ done: number; total: number } | null>(null);
  const [fileInfo, setFileInfo] = useState<string | null>(null);
  const run = useRef(0);
  const navigation = useNavigation();
  const submitting = navigation.state === "submitting";
  // The server's answer to a submission replaces the browser's preview; choosing another file replaces both.
  useEffect(() => {
    if (serverResult) setLocal(null);
  }, [serverResult]);
  const shown = local ?? serverResult;

  async function onFile(file: File | undefined) {
    const ticket = ++run.current;
    setLocal(null);
    if (!file) return;
    setFileInfo(`${file.name}, ${formatBytes(file.size)}`);
    setProgress({ done: 0, total: 1 });
    const bytes = new Uint8Array(await file.arrayBuffer());
    const check = await checkProposalCsv(bytes, catalogue, {
      maxBytes, maxRows,
      sliceSize: 100,
      onProgress: (done, total) => {
        if (ticket === run.current) setProgress({ done, total });
      },
    });
    if (ticket !== run.current) return;
    setProgress(null);
    setLocal({ fileErrors: check.fileErrors, rows: check.rows.map(previewRowOf), errorCount: check.errorCount, delimiter: check.delimiter, hadByteOrderMark: check.hadByteOrderMark, checkedBy: "browser" });
  }

  const canSubmit = !local || local.errorCount === 0;
  return (
    <div className="space-y-6">
      <section className="card space-y-3 p-4">
        <p className="text-sm">
          Start from the <a href="/uploads/template.csv" download>template</a>: one row per value, the header as in the template (our column names or
          their usual spellings; comma, semicolon or tab separated; UTF-8, with or without a byte-order mark). At most {formatBytes(maxBytes)} and {maxRows.toLocaleString("en-GB")} rows.
          A row whose material, quantity and conditions match an existing record proposes a new value for it; any other row proposes a new record.
        </p>
        <Form method="post" encType="multipart/form-data" className="flex flex-wrap items-end gap-3" aria-label="Upload a CSV of proposals">
          <label className="block text-sm">
            <span className="label">CSV file</span>
            <input type="file" name="file" accept=".csv,.tsv,.txt,text/csv" required className="mt-1 block text-sm file:mr-3 file:rounded-[var(--radius-card)] file:border file:border-rule file:bg-sheet file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-ink hover:file:border-teal" onChange={(e) => void onFile(e.currentTarget.files?.[0])} data-testid="csv-file" />
          </label>
          <button type="submit" name="intent" value="check" className="btn" disabled={submitting}>Check</button>
          <button type="submit" name="intent" value="submit" className="btn-primary" disabled={submitting || !canSubmit || progress !== null}>Submit every row as a proposal</button>
        </Form>
        {fileInfo ? <p className="text-xs text-muted">{fileInfo}</p> : null}
        {progress ? (
          <div role="status" aria-live="polite" data-testid="csv-progress">
            <div className="h-2 w-full max-w-md overflow-hidden rounded-full bg-rule" role="progressbar" aria-label="Rows checked" aria-valuemin={0} aria-valuemax={progress.total} aria-valuenow={progress.done}>
              <div className="h-full rounded-full bg-copper" style={{ width: `${Math.round((100 * progress.done) / Math.max(1, progress.total))}%` }} />
            </div>
            <p className="text-xs text-muted">Checked {progress.done.toLocaleString("en-GB")} of {progress.total.toLocaleString("en-GB")} rows…</p>
          </div>
        ) : null}
        {submitting ? <p className="text-sm text-muted" role="status">Sending the file; the server checks every row again…</p> : null}
        {serverMessage ? <p role="alert" className="text-sm text-fail">{serverMessage}</p> : null}
      </section>
      {shown ? <PreviewTable result={shown} /> : null}
      <details className="card p-4 text-sm">
        <summary className="cursor-pointer font-medium">The columns</summary>
        <table className="mt-3 w-full text-left">
          <tbody>
            {CSV_COLUMNS.map((c) => (
              <tr key={c.key} className="border-t border-rule">
                <td className="py-1 pr-3 font-mono text-xs">{c.header}</td>
                <td className="py-1 pr-3 text-xs">{c.required ? "required" : "optional"}</td>
                <td className="py-1 text-muted">{c.help}{c.aliases.length ? ` (also: ${c.aliases.join(", ")})` : ""}</td>
              </tr>
            ))}
            <tr className="border-t border-rule">
              <td className="py-1 pr-3 font-mono text-xs">u1_ev … u9_ev</td>
              <td className="py-1 pr-3 text-xs">optional</td>
              <td className="py-1 text-muted">potential coefficients U_n of a gap, in eV (with period_angstrom)</td>
            </tr>
          </tbody>
        </table>
        <p className="mt-3 text-muted">A cell that a spreadsheet would run as a formula (text starting with = + - @) is refused; signed numbers such as −0.127 are values.</p>
      </details>
    </div>
  );
}
