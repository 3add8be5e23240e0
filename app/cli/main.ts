import { pathToFileURL } from "node:url";
import { type Command, EXIT_USAGE, type Io, UsageError } from "./command";
import { calcCommand } from "./commands/calc";
import { epmCommand } from "./commands/epm";
import { evaluateCommand } from "./commands/evaluate";
import { nfeCommand } from "./commands/nfe";
import { pullCommand } from "./commands/pull";
import { verifyCommand } from "./commands/verify";

/** The subcommands of `bandledger`; add new ones (pull, verify, …) here. */
export const commands: readonly Command[] = [nfeCommand, epmCommand, calcCommand, pullCommand, verifyCommand, evaluateCommand];

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
