import packageJson from "../../../package.json";
import { evaluateRelease, evaluationText, parseEvaluationQuery, type EvaluationField } from "../../domain/derived";
import { type Command, type Io, UsageError } from "../command";
import { parseOptions } from "../args";
import { exitOnReleaseFailure, fetchVerifiedRelease, outAndFormat, SERVER_USAGE, serverFrom, serverOptions, writeWhole } from "../release-download";
import { parseReleaseRef, RELEASE_REF_EXAMPLE, RELEASE_REF_FORM } from "../release-ref";

const usage = `usage: bandledger evaluate ${RELEASE_REF_FORM} --temperature K --out <file> [--material KEY [--x FRACTION]] [--substrate KEY]
                          [--missing-bowing name|linear] [--format json|csv] [--url URL] [--token TOKEN]

Downloads a frozen release and verifies it as download does, then evaluates it here, offline: Eg at Γ, X and L by
Varshni (with bowing for an alloy), a(T) (Vegard for an alloy), the Kane mass and, on a substrate, the lattice
mismatch and an alloy's lattice-matched x, each with its formula, pinned revisions and GUM uncertainty.
  ${RELEASE_REF_FORM}    the set's short name and the release number, e.g. ${RELEASE_REF_EXAMPLE}
  --temperature      K, 0 to 2000
  --material         one material of the release (default: every one; an alloy needs --x)
  --x                an alloy's composition, the fraction of end member A (AlAs in Al(x)Ga(1-x)As)
  --substrate        a material of the release with a lattice constant at 300 K
  --missing-bowing   name (default): a missing bowing parameter is named; linear: interpolate linearly, and say so
  --format           json (default) or csv; either names the release hash in its first lines
  --out              where to write the file (written whole, through a temporary file and a rename)
${SERVER_USAGE}
The same release and options always write the same bytes. Values are for simulation: confirm them against your own
measurements before a device decision.
Exit 0 written, 1 server or network error, 2 wrong arguments, 3 hash mismatch (no file).`;

const options = {
  temperature: { type: "string" },
  material: { type: "string" },
  x: { type: "string" },
  substrate: { type: "string" },
  "missing-bowing": { type: "string" },
  format: { type: "string" },
  out: { type: "string" },
  ...serverOptions,
  help: { type: "boolean", short: "h" },
} as const;

const OPTION_OF: Record<EvaluationField, string> = { temperature: "--temperature", material: "--material", x: "--x", substrate: "--substrate", missingBowing: "--missing-bowing" };

// The domain says "temperature: …"; here the field is the option.
function asOption(field: EvaluationField, message: string): string {
  return message.startsWith(`${field}: `) ? `${OPTION_OF[field]}: ${message.slice(field.length + 2)}` : `${OPTION_OF[field]}: ${message}`;
}

export const evaluateCommand: Command = {
  name: "evaluate",
  summary: "evaluate a verified frozen release at a temperature (and composition), with GUM uncertainties, into a file",
  usage,
  async run(args: string[], io: Io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    const ref = parseReleaseRef(positionals, "evaluate");
    if (values.temperature === undefined) throw new UsageError("--temperature is required (in K, e.g. 77)");
    const parsed = parseEvaluationQuery({
      temperature: values.temperature as string, material: values.material as string | undefined, x: values.x as string | undefined,
      substrate: values.substrate as string | undefined, missingBowing: values["missing-bowing"] as string | undefined,
    });
    if (!parsed.ok) {
      const [field, message] = Object.entries(parsed.errors)[0] as [EvaluationField, string];
      throw new UsageError(asOption(field, message));
    }
    const { out, format } = outAndFormat(values);
    const server = serverFrom(values);
    return exitOnReleaseFailure("evaluate", io, async () => {
      const release = await fetchVerifiedRelease(ref, "json", server);
      const result = evaluateRelease(release.content, release.sha256, parsed.query, packageJson.version);
      if (!result.ok) throw new UsageError(asOption(result.field, result.message));
      await writeWhole(out, evaluationText(result.evaluation, format));
      const count = result.evaluation.materials.reduce((n, m) => n + m.values.length, 0);
      const missing = result.evaluation.materials.reduce((n, m) => n + m.missing.length, 0);
      io.stdout(`ok ${out}: ${release.meta.set.name} release ${ref.number} at ${parsed.query.temperatureK} K, ${count} values${missing ? `, ${missing} not derived (listed in the file)` : ""}, sha256 ${release.sha256}\n`);
      return 0;
    });
  },
};
