import { readFile } from "node:fs/promises";
import { verifyReleaseText } from "../../domain/release-format";
import { type Command, type Io, UsageError } from "../command";
import { parseOptions } from "../args";
import { EXIT_FAILED, EXIT_MISMATCH } from "./download";

const usage = `usage: bandledger verify <file> [--sha256 HEX]

Recomputes a release file's SHA-256 offline from its canonical form (JSON or CSV) and compares it with the
hash the file states and, with --sha256, with the one you expect (e.g. the hash cited in a report).
Prints "ok" (exit 0) or "mismatch" (exit 3); an unreadable file exits 1.`;

const options = { sha256: { type: "string" }, help: { type: "boolean", short: "h" } } as const;

export const verifyCommand: Command = {
  name: "verify",
  summary: "recompute a release file's SHA-256 offline: ok (exit 0) or mismatch (exit 3)",
  usage,
  async run(args: string[], io: Io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    if (positionals.length !== 1) throw new UsageError(positionals.length ? `unexpected argument "${positionals[1]}"` : "name the file to verify");
    const expected = values.sha256 as string | undefined;
    if (expected !== undefined && !/^[0-9a-f]{64}$/.test(expected)) throw new UsageError("--sha256 must be 64 lower-case hex digits");
    let bytes: Buffer;
    try {
      bytes = await readFile(positionals[0]);
    } catch (e) {
      io.stderr(`bandledger verify: cannot read ${positionals[0]}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}\n`);
      return EXIT_FAILED;
    }
    let text: string;
    try {
      text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
    } catch {
      io.stdout(`mismatch ${positionals[0]}: the file is not valid UTF-8\n`);
      return EXIT_MISMATCH;
    }
    const v = await verifyReleaseText(text);
    if (!v.ok) {
      io.stdout(`mismatch ${positionals[0]}: ${v.reason}\n`);
      return EXIT_MISMATCH;
    }
    if (expected !== undefined && expected !== v.sha256) {
      io.stdout(`mismatch ${positionals[0]}: its sha256 is ${v.sha256}, not the expected ${expected}\n`);
      return EXIT_MISMATCH;
    }
    io.stdout(`ok ${positionals[0]}: ${v.content.set.name} release ${v.content.release.number} (${v.format}), ${v.content.release.itemCount} values, sha256 ${v.sha256}\n`);
    return 0;
  },
};
