// citation-js 0.7 ships no type declarations; only what Bandledger calls is declared.
declare module "@citation-js/core" {
  export const plugins: {
    input: {
      chain(input: unknown, options?: { forceType?: string; generateGraph?: boolean; strict?: boolean; target?: string }): Record<string, unknown>[];
    };
  };
  export const logger: { level: string; _log?: unknown[] };
}
declare module "@citation-js/plugin-bibtex";
