import type { Io } from "./command";

export type Row = readonly [label: string, value: string, unit?: string];

export function printJson(io: Io, value: unknown): void {
  io.stdout(`${JSON.stringify(value)}\n`);
}

/** A readable table: labels left-aligned, values right-aligned on one column, then the unit. */
export function printTable(io: Io, rows: readonly Row[]): void {
  const labelWidth = Math.max(...rows.map(([label]) => label.length));
  const valueWidth = Math.max(...rows.map(([, value]) => value.length));
  const lines = rows.map(([label, value, unit]) =>
    `${label.padEnd(labelWidth)}  ${value.padStart(valueWidth)}${unit ? `  ${unit}` : ""}`.trimEnd(),
  );
  io.stdout(`${lines.join("\n")}\n`);
}
