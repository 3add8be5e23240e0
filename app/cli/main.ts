import { pathToFileURL } from "node:url";
import { type Command, EXIT_USAGE, type Io, UsageError } from "./command";
import { calcCommand } from "./commands/calc";
import { epmCommand } from "./commands/epm";
import { evaluateCommand } from "./commands/evaluate";
import { nfeCommand } from "./commands/nfe";
import { downloadCommand } from "./commands/download";
import { verifyCommand } from "./commands/verify";
import { RELEASE_REF_FORM } from "./release-ref";

/** The subcommands of `bandledger`; add new ones (download, verify, …) here. */
export const commands: readonly Command[] = [nfeCommand, epmCommand, calcCommand, downloadCommand, verifyCommand, evaluateCommand];

/** Names of earlier versions: answered with the new form and exit 2, never run under the old name. */
export const RENAMED_COMMANDS: Readonly<Record<string, string>> = { pull: "download" };

function usage(): string {
  const width = Math.max(...commands.map((c) => c.name.length));
  return [
    "usage: bandledger <command> [options]",
    "",
    ...commands.map((c) => `  ${c.name.padEnd(width)}  ${c.summary}`),
    "",
    "Run `bandledger <command> --help` for a command's options.",
  ].join("\n");
}

export async function main(args: string[], io: Io): Promise<number> {
  const [name, ...rest] = args;
  if (name === "--help" || name === "-h" || name === "help") {
    io.stdout(`${usage()}\n`);
    return 0;
  }
  const renamed = name === undefined ? undefined : RENAMED_COMMANDS[name];
  if (renamed) {
    // The same request in today's words, a release written `set@N` as two arguments.
    const today = rest.map((a) => a.replace(/^([a-z0-9]+(?:-[a-z0-9]+)*)@(\d{1,7})$/, "$1 $2")).join(" ");
    io.stderr(`bandledger: "${name}" is now "${renamed}": bandledger ${renamed}${today ? ` ${today}` : ` ${RELEASE_REF_FORM} --out <file>`}\n`);
    return EXIT_USAGE;
  }
  const command = commands.find((c) => c.name === name);
  if (!command) {
    io.stderr(name === undefined ? `${usage()}\n` : `bandledger: unknown command "${name}" (try --help)\n`);
    return EXIT_USAGE;
  }
  try {
    return await command.run(rest, io);
  } catch (error) {
    if (error instanceof UsageError || error instanceof RangeError) {
      io.stderr(`bandledger ${command.name}: ${error.message}\n`);
      return EXIT_USAGE;
    }
    throw error;
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  const io: Io = { stdout: (text) => process.stdout.write(text), stderr: (text) => process.stderr.write(text) };
  process.exitCode = await main(process.argv.slice(2), io);
}
