import { parseArgs, type ParseArgsConfig } from "node:util";
import { parseExactDecimal } from "../domain/exact-decimal";
import { UsageError } from "./command";

type Options = NonNullable<ParseArgsConfig["options"]>;
export type Values = Record<string, string | boolean | string[] | boolean[] | undefined>;

const NEGATIVE_NUMBER = /^-(\d|\.\d)/;

/**
 * node:util parseArgs, strict, with two additions: `--c0 -0.127` is read as a value (parseArgs alone calls it
 * ambiguous), and every parse error becomes a one-line UsageError.
 */
export function parseOptions(args: string[], options: Options): { values: Values; positionals: string[] } {
  const joined: string[] = [];
  for (let i = 0; i < args.length; i++) {
    const arg = args[i];
    const name = arg.startsWith("--") && !arg.includes("=") ? arg.slice(2) : null;
    const next = args[i + 1];
    if (name && options[name]?.type === "string" && next !== undefined && NEGATIVE_NUMBER.test(next)) {
      joined.push(`${arg}=${next}`);
      i++;
    } else {
      joined.push(arg);
    }
  }
  let parsed: ReturnType<typeof parseArgs<{ args: string[]; options: Options; strict: true; allowPositionals: true; tokens: true }>>;
  try {
    parsed = parseArgs({ args: joined, options, strict: true, allowPositionals: true, tokens: true });
  } catch (error) {
    throw new UsageError(firstLine(error));
  }
  // parseArgs keeps the last of a repeated option: `--period 5 --period 6` would run with 6 without a word.
  const seen = new Set<string>();
  for (const token of parsed.tokens) {
    if (token.kind !== "option" || options[token.name]?.type !== "string" || options[token.name]?.multiple) continue;
    if (seen.has(token.name)) throw new UsageError(`--${token.name} is given twice; it takes one value`);
    seen.add(token.name);
  }
  return { values: parsed.values as Values, positionals: parsed.positionals };
}

// parseArgs explains at length; keep the first sentence that names the option.
function firstLine(error: unknown): string {
  const message = (error instanceof Error ? error.message : String(error)).split("\n")[0];
  return message.replace(/\. To specify .*$/, "");
}

export interface NumberRule {
  /** Strictly greater than zero. */
  positive?: boolean;
  min?: number;
  max?: number;
}

// Read as the registry reads a typed value (parseExactDecimal), then as a number for the physics.
export function parseNumber(text: string, label: string, rule: NumberRule = {}): number {
  const parsed = parseExactDecimal(text);
  if (!parsed.ok) throw new UsageError(`${label} must be a number (got "${text}")`);
  const value = Number(parsed.value.canonical);
  if (rule.positive && !(value > 0)) throw new UsageError(`${label} must be positive (got ${text})`);
  if (rule.min !== undefined && value < rule.min) throw new UsageError(`${label} must be at least ${rule.min} (got ${text})`);
  if (rule.max !== undefined && value > rule.max) throw new UsageError(`${label} must be at most ${rule.max} (got ${text})`);
  return value;
}

export function requiredNumber(values: Values, name: string, rule?: NumberRule): number {
  const text = values[name];
  if (text === undefined) throw new UsageError(`--${name} is required`);
  return parseNumber(String(text), `--${name}`, rule);
}

export function optionalNumber(values: Values, name: string, fallback: number, rule?: NumberRule): number;
export function optionalNumber(values: Values, name: string, fallback: null, rule?: NumberRule): number | null;
export function optionalNumber(values: Values, name: string, fallback: number | null, rule?: NumberRule): number | null {
  const text = values[name];
  return text === undefined ? fallback : parseNumber(String(text), `--${name}`, rule);
}

export function noPositionals(positionals: string[]): void {
  if (positionals.length > 0) throw new UsageError(`unexpected argument "${positionals[0]}"`);
}
