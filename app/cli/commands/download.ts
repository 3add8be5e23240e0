import type { ReleaseFormat } from "../../domain/release-format";
import { type Command, type Io, UsageError } from "../command";
import { parseOptions } from "../args";
import { COMPRESSIONS, exitOnReleaseFailure, fetchVerifiedRelease, outAndFormat, SERVER_USAGE, serverFrom, serverOptions, writeWhole, type Compression, type ReleaseMeta, type Server } from "../release-download";
import { parseReleaseRef, RELEASE_REF_EXAMPLE, RELEASE_REF_FORM, type ReleaseRef } from "../release-ref";

export { EXIT_FAILED, EXIT_MISMATCH } from "../release-download";

const usage = `usage: bandledger download ${RELEASE_REF_FORM} --out <file> [--format json|csv] [--compression auto|br|gzip|none] [--url URL] [--token TOKEN]

Downloads a frozen release, verifies it and writes it only when every check holds.
  ${RELEASE_REF_FORM}  the set's short name and the release number, e.g. ${RELEASE_REF_EXAMPLE}
  --out            where to write the file (written whole, through a temporary file and a rename)
  --format         json (default) or csv
  --compression    what to ask the server for: auto (default: brotli or gzip), br, gzip, or none
${SERVER_USAGE}
Checks: the release's hash from the API, the download's ETag and Repr-Digest (of the bytes as sent), the SHA-256
of the decoded bytes, and the file's own hash recomputed from its canonical form. Exit 0 written, 1 server or network error, 2 wrong arguments, 3 hash mismatch (no file).`;

const options = {
  out: { type: "string" },
  format: { type: "string" },
  compression: { type: "string" },
  ...serverOptions,
  help: { type: "boolean", short: "h" },
} as const;

export async function downloadRelease(ref: ReleaseRef, format: ReleaseFormat, server: Server, out: string, compression: Compression = "auto"): Promise<{ sha256: string; bytes: number; encoding: string; meta: ReleaseMeta }> {
  const release = await fetchVerifiedRelease(ref, format, server, compression);
  await writeWhole(out, release.bytes);
  return { sha256: release.meta.sha256, bytes: release.bytes.length, encoding: release.encoding, meta: release.meta };
}

export const downloadCommand: Command = {
  name: "download",
  summary: "download a frozen release, verify its SHA-256 and write it (exit 3 on a mismatch)",
  usage,
  async run(args: string[], io: Io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    const ref = parseReleaseRef(positionals, "download");
    const { out, format } = outAndFormat(values);
    const compression = (values.compression as string | undefined) ?? "auto";
    if (!(COMPRESSIONS as readonly string[]).includes(compression)) throw new UsageError(`--compression must be auto, br, gzip or none (got "${compression}")`);
    const server = serverFrom(values);
    return exitOnReleaseFailure("download", io, async () => {
      const result = await downloadRelease(ref, format, server, out, compression as Compression);
      io.stdout(`ok ${out}: ${result.meta.set.name} release ${ref.number}, ${result.meta.itemCount} values, sha256 ${result.sha256} (sent as ${result.encoding})\n`);
      return 0;
    });
  },
};
