import { z } from "zod";
import { releaseContentSchema, releaseItemSchema } from "./release-format";

// The shapes of API v1: request parsing in the routes, and the OpenAPI document generated from them (`.meta({ id })`
// names a component). Measured numbers are decimal strings throughout; only counts and ids are JSON numbers.

const decimal = z.string().regex(/^-?\d+(?:\.\d+)?$/).meta({ description: "An exact decimal as a string, e.g. \"1.519\"." });
const sha256 = z.string().regex(/^[0-9a-f]{64}$/).meta({ description: "SHA-256, lower-case hex." });
const instant = z.string().meta({ description: "ISO 8601 instant in UTC.", example: "2026-03-02T09:15:00.000Z" });
const valley = z.enum(["G", "X", "L"]).meta({ description: "Conduction-band valley: G for Γ, X or L." });
const method = z.enum(["measured", "calculated", "fitted", "compilation"]);
const releaseItem = releaseItemSchema.meta({ id: "ReleaseItem", description: "One pinned value of a release (docs/release-format.md)." });

export const apiErrorSchema = z
  .object({
    error: z.object({
      code: z.string().meta({ example: "not_found" }),
      message: z.string(),
      field: z.string().nullable().meta({ description: "The parameter or body field at fault, or null." }),
    }),
  })
  .meta({ id: "Error", description: "Every error answers with this body and the matching status." });

export const sourceSchema = z
  .object({
    kind: z.enum(["doi", "bibtex", "report"]),
    doi: z.string().nullable(),
    bibtexKey: z.string().nullable(),
    reportNumber: z.string().nullable(),
    title: z.string(),
    authors: z.string().nullable(),
    year: z.number().int().nullable(),
  })
  .meta({ id: "Source" });

export const materialSchema = z
  .object({
    key: z.string().meta({ example: "GaAs" }),
    name: z.string(),
    formula: z.string().meta({ example: "Al(x)Ga(1-x)As" }),
    kind: z.enum(["element", "binary", "alloy"]),
    structure: z.enum(["diamond", "zinc_blende", "wurtzite"]),
    family: z.object({ key: z.string(), name: z.string() }),
    compositionVariable: z.string().nullable(),
    activeRecords: z.number().int(),
  })
  .meta({ id: "Material" });

export const materialListSchema = z.object({ materials: z.array(materialSchema) }).meta({ id: "MaterialList" });

export const quantitySchema = z
  .object({
    key: z.string().meta({ example: "eg" }),
    symbol: z.string(),
    name: z.string(),
    canonicalUnit: z.string().meta({ description: "Unit every value is stored in; \"1\" for dimensionless." }),
    acceptedUnits: z.array(z.string()),
    rangeMin: decimal.nullable(),
    rangeMax: decimal.nullable(),
    description: z.string(),
    dependsOnTemperature: z.boolean(),
    dependsOnValley: z.boolean(),
    dependsOnComposition: z.boolean(),
  })
  .meta({ id: "Quantity" });

export const quantityListSchema = z.object({ quantities: z.array(quantitySchema) }).meta({ id: "QuantityList" });

export const revisionSchema = z
  .object({
    id: z.number().int(),
    seq: z.number().int(),
    kind: z.enum(["value", "retirement"]),
    state: z.enum(["current", "superseded", "retired"]),
    value: decimal.nullable(),
    unit: z.string(),
    uncertainty: decimal.nullable(),
    method: method.nullable(),
    source: sourceSchema.nullable(),
    locator: z.string().nullable(),
    notes: z.string().nullable(),
    validFromK: decimal.nullable(),
    validToK: decimal.nullable(),
    proposedBy: z.string().nullable(),
    approvedBy: z.string().nullable(),
    approvedAt: instant.nullable(),
  })
  .meta({ id: "Revision" });

export const recordSchema = z
  .object({
    id: z.number().int(),
    status: z.enum(["active", "retired"]),
    material: z.object({ key: z.string(), name: z.string() }),
    quantity: z.object({ key: z.string(), symbol: z.string(), name: z.string() }),
    unit: z.string(),
    temperatureK: decimal.nullable(),
    temperatureKind: z.enum(["stated", "fit0", "independent"]),
    valley: valley.nullable(),
    composition: decimal.nullable(),
    updatedAt: instant,
    current: revisionSchema.nullable().meta({ description: "The current value revision; null for a retired record." }),
  })
  .meta({ id: "Record" });

export const recordPageSchema = z
  .object({
    records: z.array(recordSchema),
    nextCursor: z.string().nullable().meta({ description: "Pass as ?cursor= for the next page; null on the last page." }),
  })
  .meta({ id: "RecordPage" });

export const recordHistorySchema = z
  .object({ record: recordSchema, revisions: z.array(revisionSchema).meta({ description: "Newest first." }) })
  .meta({ id: "RecordHistory" });

export const RECORDS_PAGE_LIMIT_MAX = 500;

// A filter that cannot be a key (quotes, spaces, markup) is a malformed request, not a filter that matches nothing.
const catalogueKey = (max: number) =>
  z.string().max(max).regex(/^[A-Za-z0-9_().-]+$/, "A key holds letters, digits and _ ( ) . - only, as /api/v1/materials and /api/v1/quantities list them.");

export const recordsQuerySchema = z.object({
  family: catalogueKey(40).optional().meta({ description: "Material family key, e.g. arsenides." }),
  material: catalogueKey(40).optional().meta({ description: "Material key, e.g. GaAs." }),
  quantity: catalogueKey(64).optional().meta({ description: "Quantity key, e.g. eg." }),
  valley: valley.optional(),
  method: method.optional(),
  status: z.enum(["active", "retired", "all"]).default("active"),
  limit: z.coerce.number().int().min(1).max(RECORDS_PAGE_LIMIT_MAX).default(100),
  cursor: z.string().max(200).optional().meta({ description: "Opaque cursor from the previous page's nextCursor." }),
});

export const releaseSummarySchema = z
  .object({
    number: z.number().int(),
    sha256: sha256.meta({ description: "Content hash: SHA-256 of the canonical JSON of the release content; the JSON download's ETag." }),
    csvSha256: sha256.meta({ description: "SHA-256 of the exact CSV bytes; the CSV download's ETag." }),
    itemCount: z.number().int(),
    codataEdition: z.string(),
    softwareVersion: z.string(),
    frozenBy: z.string(),
    frozenAt: instant,
    downloads: z.object({ json: z.string(), csv: z.string() }).meta({ description: "Paths of the two downloads." }),
  })
  .meta({ id: "ReleaseSummary" });

export const setSummarySchema = z
  .object({
    slug: z.string().meta({ example: "hemt-baseline" }),
    name: z.string(),
    purpose: z.string(),
    description: z.string().nullable(),
    version: z.number().int().meta({ description: "Changes with every edit; pass it back as expectedVersion when freezing." }),
    memberCount: z.number().int(),
    latestRelease: releaseSummarySchema.nullable(),
  })
  .meta({ id: "SetSummary" });

export const setListSchema = z.object({ sets: z.array(setSummarySchema) }).meta({ id: "SetList" });

export const memberSchema = z
  .object({
    recordId: z.number().int(),
    material: z.object({ key: z.string(), name: z.string() }),
    quantity: z.object({ key: z.string(), symbol: z.string(), name: z.string() }),
    status: z.enum(["active", "retired"]),
    current: releaseItem.nullable().meta({ description: "What a freeze now would pin; null when the record has no current value." }),
    sinceLastRelease: z.enum(["new", "changed", "unchanged", "retired"]).nullable().meta({ description: "Null before the first release." }),
  })
  .meta({ id: "SetMember" });

export const setDetailSchema = setSummarySchema
  .extend({ members: z.array(memberSchema), releases: z.array(releaseSummarySchema) })
  .meta({ id: "SetDetail" });

export const releaseDetailSchema = releaseSummarySchema
  .extend({ set: z.object({ slug: z.string(), name: z.string() }) })
  .meta({ id: "ReleaseDetail" });

export const releaseDocumentSchema = z
  .object({ content: releaseContentSchema, sha256 })
  .meta({ id: "ReleaseDocument", description: "The JSON download, schema bandledger.release version 1 (docs/release-format.md)." });

export const downloadQuerySchema = z.object({ format: z.enum(["json", "csv"]).default("json") });

export const compareQuerySchema = z.object({
  from: z.coerce.number().int().positive().meta({ description: "Release number to compare from." }),
  to: z.union([z.literal("current"), z.coerce.number().int().positive()]).default("current").meta({ description: "Release number, or \"current\" for what a freeze now would pin." }),
});

export const comparisonEntrySchema = z
  .object({
    recordId: z.number().int(),
    change: z.enum(["added", "removed", "changed"]),
    label: z.string().meta({ example: "GaAs Eg (Γ, 300 K)" }),
    old: releaseItem.nullable(),
    new: releaseItem.nullable(),
  })
  .meta({ id: "ComparisonEntry" });

export const comparisonSchema = z
  .object({
    set: z.object({ slug: z.string(), name: z.string() }),
    from: z.object({ release: z.number().int(), sha256 }),
    to: z.object({ release: z.union([z.number().int(), z.literal("current")]), sha256: sha256.nullable() }),
    added: z.array(comparisonEntrySchema),
    removed: z.array(comparisonEntrySchema),
    changed: z.array(comparisonEntrySchema),
    unchanged: z.number().int(),
  })
  .meta({ id: "Comparison" });

export const freezeBodySchema = z
  .strictObject({ expectedVersion: z.number().int().positive().optional().meta({ description: "The set version you saw; a later edit or freeze makes this a 409." }) })
  .meta({ id: "FreezeRequest" });

export const NFE_MAX_COEFFICIENTS = 50;

// Strict: a misspelt field ("stated_gap") would otherwise be dropped and the check run without it.
export const nfeCheckBodySchema = z
  .strictObject({
    periodAngstrom: z.number().positive().max(100).meta({ description: "Lattice period a in Å.", example: 5.65325 }),
    coefficients: z
      .array(z.strictObject({ n: z.number().int().min(1).max(NFE_MAX_COEFFICIENTS), valueEv: z.number().min(-10).max(10) }))
      .min(1)
      .max(NFE_MAX_COEFFICIENTS)
      .meta({ description: "Fourier coefficients U_n in eV of U(x) = Σ U_n e^{inGx}, U_-n = U_n." }),
    gap: z.number().int().min(1).max(20).default(1).meta({ description: "Gap between bands n and n+1 (k = π/a for odd n, 0 for even n)." }),
    mass: z.number().positive().max(10).default(1).meta({ description: "Band mass in m0." }),
    statedGapEv: z.number().min(0).max(20).nullable().default(null),
    toleranceEv: z.number().positive().max(5).default(0.01),
  })
  .meta({ id: "NfeCheckRequest" });

const edges = z.object({ gapEv: decimal, lowerEv: decimal, upperEv: decimal });

export const nfeCheckResultSchema = z
  .object({
    gap: z.number().int(),
    kPiOverA: z.union([z.literal(0), z.literal(1)]),
    firstOrder: edges,
    centralEquation: edges.extend({ planeWaves: z.number().int(), converged: z.boolean() }),
    statedGapEv: decimal.nullable(),
    toleranceEv: decimal,
    residualEv: decimal.nullable(),
    verdict: z.enum(["pass", "warn", "fail", "none"]),
    notes: z.array(z.string()),
    codataEdition: z.string(),
  })
  .meta({ id: "NfeCheckResult", description: "Derived numbers as decimal strings with 12 significant digits." });

/** The form factors a pseudopotential check takes; antisymmetric ones only for zinc blende. */
export const EPM_FORM_FACTOR_LIMIT = { ry: 1, ev: 13.6 } as const;
export const EPM_LATTICE_LIMIT_ANGSTROM = { min: 2, max: 10 } as const;

const formFactor = z.number().finite();

// Strict throughout: a misspelt key ("S4", "stated_gamma") is refused at its field, never dropped.
export const epmCheckBodySchema = z
  .strictObject({
    structure: z.enum(["diamond", "zincblende"]).meta({ description: "diamond (one kind of atom) or zincblende (two)." }),
    latticeAngstrom: z
      .number()
      .min(EPM_LATTICE_LIMIT_ANGSTROM.min)
      .max(EPM_LATTICE_LIMIT_ANGSTROM.max)
      .meta({ description: "Cubic lattice constant a in Å.", example: 5.43 }),
    formFactorUnit: z.enum(["ry", "ev"]).default("ry").meta({ description: "Unit of the form factors; 1 Ry = 13.605693122994 eV (CODATA 2018)." }),
    formFactors: z
      .strictObject({
        S3: formFactor,
        S8: formFactor,
        S11: formFactor,
        A3: formFactor.optional(),
        A4: formFactor.optional(),
        A11: formFactor.optional(),
      })
      .meta({
        description: "V_S(|G|²) and V_A(|G|²) at |G|² = 3, 8, 11 and 3, 4, 11 in units of (2π/a)²; V(G) = V_S cos(G·τ) + i V_A sin(G·τ), τ = (a/8)(1,1,1).",
        example: { S3: -0.21, S8: 0.04, S11: 0.08 },
      }),
    stated: z
      .strictObject({
        gammaEv: z.number().min(0).max(20).nullable().optional(),
        xEv: z.number().min(0).max(20).nullable().optional(),
        lEv: z.number().min(0).max(20).nullable().optional(),
      })
      .default({})
      .meta({ description: "Stated gaps, from the valence maximum E4(Γ): Eg(Γ) = E5(Γ) − E4(Γ), Eg(X) = E5(X) − E4(Γ), Eg(L) = E5(L) − E4(Γ)." }),
    toleranceEv: z.number().positive().max(5).default(0.15),
    bands: z.boolean().default(false).meta({ description: "Also return the band structure along L–Γ–X–U|K–Γ (about 120 k-points)." }),
  })
  .superRefine((body, ctx) => {
    const limit = EPM_FORM_FACTOR_LIMIT[body.formFactorUnit];
    for (const [key, value] of Object.entries(body.formFactors)) {
      if (value === undefined) continue;
      if (Math.abs(value) > limit) {
        ctx.addIssue({ code: "custom", path: ["formFactors", key], message: `A form factor lies between −${limit} and ${limit} ${body.formFactorUnit === "ry" ? "Ry" : "eV"}.` });
      }
      if (body.structure === "diamond" && key.startsWith("A")) {
        ctx.addIssue({ code: "custom", path: ["formFactors", key], message: "Antisymmetric form factors need the zinc-blende structure (diamond has one kind of atom)." });
      }
    }
  })
  .meta({ id: "EpmCheckRequest" });

const epmGap = z.object({ gapEv: decimal, statedEv: decimal.nullable(), residualEv: decimal.nullable(), verdict: z.enum(["pass", "warn", "fail", "none"]) });

export const epmCheckResultSchema = z
  .object({
    structure: z.enum(["diamond", "zincblende"]),
    latticeAngstrom: decimal,
    formFactorsEv: z.record(z.string(), decimal).meta({ description: "The form factors used, in eV." }),
    gamma: epmGap,
    x: epmGap.extend({
      gammaXMinimum: z.object({ gapEv: decimal, fraction: decimal }).meta({ description: "The lowest conduction energy along Γ–X and where it lies (fraction of Γ–X)." }),
    }),
    l: epmGap,
    fundamental: z.object({ gapEv: decimal, valley: z.enum(["Γ", "X", "L", "Δ"]) }),
    planeWaves: z.number().int(),
    maxSquare: z.number().int().meta({ description: "The basis: every G with |G|² ≤ maxSquare, in units of (2π/a)²." }),
    converged: z.boolean(),
    convergenceEv: decimal,
    toleranceEv: decimal,
    verdict: z.enum(["pass", "warn", "fail", "none"]),
    notes: z.array(z.string()),
    bands: z
      .object({
        labels: z.array(z.object({ label: z.string(), distance: z.number() })),
        distance: z.array(z.number()).meta({ description: "Distance along the path in units of 2π/a." }),
        energiesEv: z.array(z.array(z.number())).meta({ description: "energiesEv[b][i]: band b + 1 at distance[i], from the valence maximum, rounded to 0.1 meV (plotting data)." }),
        planeWaves: z.number().int(),
        deviationEv: z.number().meta({ description: "How far this basis puts the gaps at Γ, X, L from the converged ones." }),
      })
      .nullable(),
    codataEdition: z.string(),
  })
  .meta({ id: "EpmCheckResult", description: "Derived numbers as decimal strings with 12 significant digits; the band arrays are plotting data." });

const SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

/** A new set as typed on /sets/new. */
export const setInputSchema = z.object({
  name: z.string({ error: "Give the set a name of at least two characters." }).trim().min(2, "Give the set a name of at least two characters.").max(120, "Keep the name under 120 characters."),
  slug: z.preprocess(
    (v) => (typeof v === "string" && v.trim() === "" ? undefined : v),
    z.string().trim().toLowerCase().max(80, "Keep the short name under 80 characters.").regex(SLUG, "Use lower-case letters, digits and single dashes.").optional(),
  ),
  purpose: z.string({ error: "Say what the set is for, e.g. the simulation it feeds." }).trim().min(3, "Say what the set is for, e.g. the simulation it feeds.").max(200, "Keep the purpose under 200 characters."),
  description: z.preprocess((v) => (typeof v === "string" && v.trim() === "" ? undefined : v), z.string().trim().max(4000, "Keep the description under 4000 characters.").optional()),
});
export type SetInput = z.infer<typeof setInputSchema>;

/** The short name in URLs and file names, from the set's name: "HEMT baseline" → "hemt-baseline". */
export function slugFromName(name: string): string {
  return name
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 80)
    .replace(/-+$/, "");
}

export const evaluateQuerySchema = z.object({
  temperature: z.string().meta({ description: "Temperature in K, 0 to 2000.", example: "77" }),
  material: z.string().optional().meta({ description: "A material key of the release; without it, every material of the release.", example: "AlGaAs" }),
  x: z.string().optional().meta({ description: "Composition of an alloy, 0 to 1: the fraction of end member A (AlAs in Al(x)Ga(1-x)As). Needed with an alloy.", example: "0.3" }),
  substrate: z.string().optional().meta({ description: "A material of the release with a lattice constant at 300 K: adds the lattice mismatch (and, for an alloy, the lattice-matched composition).", example: "GaAs" }),
  missingBowing: z.enum(["name", "linear"]).optional().meta({ description: "\"name\" (default): a missing bowing parameter is named under missing; \"linear\": interpolate linearly instead, and say so." }),
  format: z.enum(["json", "csv"]).optional().meta({ description: "json (default) or csv (a download, with the release hash in its preamble)." }),
});

const evaluatedInput = z.object({
  material: z.string().nullable().meta({ description: "Whose value, when not the evaluated material's own (an end member, the substrate)." }),
  symbol: z.string(),
  value: decimal,
  unit: z.string(),
  uncertainty: decimal.nullable().meta({ description: "The revision's standard uncertainty; null when it states none (\"± not stated\", never zero)." }),
  uncertaintyStated: z.boolean(),
  sensitivity: z.string().meta({ description: "Sensitivity coefficient ∂y/∂x_i." }),
  contribution: z.string().nullable().meta({ description: "|∂y/∂x_i|·u(x_i) in the unit of the result; null without a stated uncertainty." }),
  recordId: z.number().int().nullable(),
  revisionId: z.number().int().nullable().meta({ description: "The pinned revision." }),
  source: z.string().nullable(),
});

export const evaluatedValueSchema = z
  .object({
    id: z.string().meta({ description: "eg-G, eg-X, eg-L, lattice-a, kane-me, mismatch or lattice-match-x." }),
    label: z.string(),
    value: z.string().meta({ description: "Decimal string, 12 significant digits." }),
    unit: z.string(),
    standardUncertainty: z.string().nullable().meta({ description: "Combined standard uncertainty by the GUM (first order); null when no input that moves the value states one." }),
    uncertaintyStatus: z.enum(["complete", "partial", "not-stated"]),
    uncertaintyNotStated: z.array(z.string()).meta({ description: "The inputs that move the value but state no uncertainty." }),
    formula: z.string(),
    reference: z.string(),
    warnings: z.array(z.string()),
    stated: z.object({ value: decimal, uncertainty: decimal.nullable(), recordId: z.number().int().nullable(), revisionId: z.number().int().nullable() }).nullable()
      .meta({ description: "A value the release states at exactly these conditions, beside the derived one." }),
    inputs: z.array(evaluatedInput).meta({ description: "The uncertainty budget: every pinned revision the value came from." }),
  })
  .meta({ id: "EvaluatedValue" });

export const evaluationSchema = z
  .object({
    schema: z.literal("bandledger.evaluation"),
    schemaVersion: z.literal(1),
    release: z.object({ sha256, set: z.string(), setName: z.string(), number: z.number().int(), codataEdition: z.string(), softwareVersion: z.string() })
      .meta({ description: "The release the numbers were computed from." }),
    evaluatedWith: z.object({ bandledgerVersion: z.string(), codataEdition: z.string(), uncertaintyMethod: z.string() }),
    conditions: z.object({ temperatureK: decimal, material: z.string().nullable(), x: decimal.nullable(), substrate: z.string().nullable(), missingBowing: z.enum(["name", "linear"]) }),
    caution: z.string(),
    materials: z.array(z.object({
      key: z.string(),
      name: z.string(),
      formula: z.string(),
      kind: z.enum(["element", "binary", "alloy"]),
      composition: decimal.nullable(),
      endMembers: z.object({ a: z.string(), b: z.string() }).nullable(),
      substrate: z.string().nullable(),
      values: z.array(evaluatedValueSchema),
      missing: z.array(z.string()).meta({ description: "What could not be derived from the release, and why." }),
    })),
  })
  .meta({ id: "Evaluation", description: "A release evaluated at a temperature (and composition, substrate). The same conditions give the same bytes." });
