/** Exit code for a wrong, missing or unknown argument or subcommand. */
export const EXIT_USAGE = 2;

export interface Io {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
}

/** One `bandledger <name> …` subcommand; the dispatcher in main.ts lists them. */
export interface Command {
  name: string;
  summary: string;
  usage: string;
  run: (args: string[], io: Io) => number | Promise<number>;
}

/** A wrong or missing argument: main.ts prints its one-line message and exits with EXIT_USAGE. */
export class UsageError extends Error {
  override name = "UsageError";
}
