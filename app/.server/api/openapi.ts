import { OpenAPIRegistry, OpenApiGeneratorV31, type RouteConfig } from "@asteasolutions/zod-to-openapi";
import { z } from "zod";
import {
  apiErrorSchema, comparisonSchema, evaluateQuerySchema, evaluationSchema, compareQuerySchema, downloadQuerySchema, freezeBodySchema, materialListSchema, nfeCheckBodySchema, epmCheckBodySchema, epmCheckResultSchema,
  nfeCheckResultSchema, quantityListSchema, recordHistorySchema, recordPageSchema, recordsQuerySchema, releaseDetailSchema, releaseDocumentSchema, releaseSummarySchema,
  setDetailSchema, setListSchema,
} from "~/domain/api-schemas";
import { SOFTWARE_VERSION } from "../sets/service";
import { DEPRECATED_PATHS, DEPRECATED_SINCE, deprecationHeaders } from "./deprecation";

const ERROR_TEXT: Record<number, string> = {
  400: "The request is malformed: a parameter or body field is missing or of the wrong kind.",
  401: "No credentials, or a token that is unknown, revoked or of a deactivated account.",
  403: "The caller's role does not allow this, a token tried to change something, or a browser call came from another site.",
  404: "No such record, set or release.",
  409: "The set changed since the version you sent.",
  422: "Well-formed, but the registry or the physics refuses it.",
  429: "Too many requests this minute from this token; wait Retry-After seconds.",
};

function errors(...codes: number[]): RouteConfig["responses"] {
  return Object.fromEntries(
    codes.map((code) => [
      code,
      {
        description: ERROR_TEXT[code],
        content: { "application/json": { schema: apiErrorSchema } },
        ...(code === 429 ? { headers: { "Retry-After": { description: "Seconds until the limit resets.", schema: { type: "integer" as const } } } } : {}),
      },
    ]),
  );
}

const json = (schema: z.ZodType, description: string) => ({ description, content: { "application/json": { schema } } });
const READ_ERRORS = [401, 429];
const slugParam = z.object({ slug: z.string().meta({ description: "Short name of the set.", example: "hemt-baseline" }) });
const releaseParams = slugParam.extend({ number: z.coerce.number().int().positive().meta({ description: "Release number.", example: 3 }) });

function buildRegistry(): OpenAPIRegistry {
  const registry = new OpenAPIRegistry();
  registry.registerComponent("securitySchemes", "bearerToken", {
    type: "http",
    scheme: "bearer",
    description: "A personal read token (blt_…) created on the account page.",
  });
  registry.registerComponent("securitySchemes", "browserSession", { type: "apiKey", in: "cookie", name: "__bandledger", description: "The signed-in browser's session cookie." });

  const accountSchema = z.object({ user: z.object({ id: z.number().int(), email: z.string(), name: z.string(), role: z.enum(["reader", "contributor", "lead", "admin"]), leadFamilyIds: z.array(z.number().int()) }) });
  registry.registerPath({
    method: "get", path: "/api/v1/account", tags: ["account"], summary: "Whom the credentials stand for",
    responses: { 200: json(accountSchema, "The user."), ...errors(401) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/materials", tags: ["registry"], summary: "Materials with their family",
    responses: { 200: json(materialListSchema, "Every material, by key."), ...errors(...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/quantities", tags: ["registry"], summary: "Quantities, their units and plausible ranges",
    responses: { 200: json(quantityListSchema, "Every quantity kept as records, in catalogue order."), ...errors(...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/records", tags: ["registry"], summary: "Records with their current values, filtered, in pages",
    description: "Records in id order. Follow nextCursor until it is null; a cursor stays valid while records are added.",
    request: { query: recordsQuerySchema },
    responses: { 200: json(recordPageSchema, "One page."), ...errors(400, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/records/{id}/history", tags: ["registry"], summary: "A record with every revision, newest first",
    request: { params: z.object({ id: z.coerce.number().int().positive().meta({ example: 1 }) }) },
    responses: { 200: json(recordHistorySchema, "The record and its revisions."), ...errors(400, 404, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets", tags: ["sets"], summary: "Parameter sets with their latest release",
    responses: { 200: json(setListSchema, "Every set, by name."), ...errors(...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}", tags: ["sets"], summary: "A set: members (marked against the latest release) and releases",
    request: { params: slugParam },
    responses: { 200: json(setDetailSchema, "The set."), ...errors(404, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}/releases", tags: ["sets"], summary: "The releases of a set, newest first",
    request: { params: slugParam },
    responses: { 200: json(z.object({ releases: z.array(releaseSummarySchema) }), "The releases."), ...errors(404, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "post", path: "/api/v1/sets/{slug}/releases", tags: ["sets"], summary: "Freeze the set into its next release (lead or admin, signed in)",
    description: "Only from a signed-in browser on this site: personal tokens are read-only. With expectedVersion, any edit or freeze since is a 409.",
    request: { params: slugParam, body: { content: { "application/json": { schema: freezeBodySchema } } } },
    responses: { 201: json(releaseDetailSchema, "The new release."), ...errors(400, 401, 403, 404, 409, 422, 429) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}/releases/{number}", tags: ["sets"], summary: "A release's metadata and hashes",
    request: { params: releaseParams },
    responses: { 200: json(releaseDetailSchema, "The release."), ...errors(400, 404, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}/releases/{number}/download", tags: ["sets"], summary: "The frozen bytes of a release, JSON or CSV",
    description: "The same bytes for every request, for ever, as identity or compressed (br or gzip) by Accept-Encoding; decoded, every form is the identity bytes. The identity ETag is the SHA-256 of the content (JSON) or of the CSV bytes; an encoded form has its own ETag beginning with it. Send If-None-Match for a 304. Downloads by token are written to the audit log.",
    request: { params: releaseParams, query: downloadQuerySchema },
    responses: {
      200: {
        description: "The release file, with Content-Disposition naming it <slug>-r<number>.<format>.",
        headers: {
          ETag: { description: "\"<sha256>\" as identity; \"<sha256>-<br|gzip>-<16 hex of the encoded bytes' SHA-256>\" for an encoded form", schema: { type: "string" } },
          "Content-Encoding": { description: "br or gzip when the request accepts one; absent for identity.", schema: { type: "string" } },
          "Cache-Control": { description: "private, max-age=31536000, immutable (members only: never kept by a shared cache)", schema: { type: "string" } },
          Vary: { description: "Cookie, Authorization, Accept-Encoding", schema: { type: "string" } },
          "Repr-Digest": { description: "sha-256 of the bytes served, encoded ones for an encoded form (RFC 9530).", schema: { type: "string" } },
          "X-Bandledger-Release-Sha256": { description: "The release's content hash, for both formats.", schema: { type: "string" } },
        },
        content: { "application/json": { schema: releaseDocumentSchema }, "text/csv": { schema: z.string().meta({ description: "The CSV form (docs/release-format.md)." }) } },
      },
      304: { description: "Not modified: the If-None-Match matched the ETag." },
      ...errors(400, 404, ...READ_ERRORS),
    },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}/releases/{number}/evaluate", tags: ["sets"], summary: "A release evaluated at a temperature, composition and substrate",
    description:
      "Every derived value the release's pinned revisions give: Eg at Γ, X and L by Varshni (with bowing for an alloy), a(T) (Vegard for an alloy), the Kane mass, and on a substrate the lattice mismatch and an alloy's lattice-matched x; each with its formula, the revisions it used and a GUM uncertainty budget (inputs without a stated uncertainty are named, never taken as zero). What cannot be derived is named under missing. The same conditions give the same bytes as `bandledger evaluate`.",
    request: { params: releaseParams, query: evaluateQuerySchema },
    responses: {
      200: {
        description: "The evaluation; X-Bandledger-Release-Sha256 names the release it was computed from.",
        headers: { "X-Bandledger-Release-Sha256": { description: "The release's content hash.", schema: { type: "string" } } },
        content: { "application/json": { schema: evaluationSchema }, "text/csv": { schema: z.string().meta({ description: "The CSV form: a # preamble with the release hash and the conditions, then one row per value." }) } },
      },
      ...errors(400, 404, ...READ_ERRORS),
    },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/sets/{slug}/compare", tags: ["sets"], summary: "What changed between two releases, or a release and the current registry",
    request: { params: slugParam, query: compareQuerySchema },
    responses: { 200: json(comparisonSchema, "Added, removed and changed values, old and new with their sources."), ...errors(400, 404, 422, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "post", path: "/api/v1/checks/nfe", tags: ["checks"], summary: "Nearly-free-electron check of a gap from its potential coefficients",
    description: "Read-only computation: first-order 2|U_n| and the converged central-equation gap, compared with the stated gap.",
    request: { body: { content: { "application/json": { schema: nfeCheckBodySchema } } } },
    responses: { 200: json(nfeCheckResultSchema, "The check."), ...errors(400, 422, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "post", path: "/api/v1/checks/epm", tags: ["checks"], summary: "Pseudopotential check of the gaps at Γ, X and L from form factors",
    description:
      "Read-only computation: the empirical pseudopotential method (Cohen & Bergstresser, Phys. Rev. 141, 789 (1966)) for a diamond or zinc-blende crystal, " +
      "plane waves |G|² ≤ Gmax² grown until the gaps move by less than 1 meV, compared with the stated gaps (default tolerance 0.15 eV). " +
      "A three-form-factor local model reproduces the main gaps to about 0.1–0.3 eV: it checks consistency and does not replace measured values.",
    request: { body: { content: { "application/json": { schema: epmCheckBodySchema } } } },
    responses: { 200: json(epmCheckResultSchema, "The check."), ...errors(400, 422, ...READ_ERRORS) },
  });
  registry.registerPath({
    method: "get", path: "/api/v1/openapi.json", tags: ["meta"], summary: "This description (OpenAPI 3.1)", security: [],
    responses: { 200: { description: "The OpenAPI document.", content: { "application/json": { schema: z.record(z.string(), z.unknown()) } } } },
  });
  registerDeprecated(registry);
  return registry;
}

/**
 * Each old address answers as its successor for one release: the successor's operation again, marked deprecated,
 * with the Deprecation and Link headers on every answer.
 */
function registerDeprecated(registry: OpenAPIRegistry): void {
  const byPath = new Map(registry.definitions.flatMap((d) => (d.type === "route" ? [[`${d.route.method} ${d.route.path}`, d.route] as const] : [])));
  for (const { path, successor } of DEPRECATED_PATHS) {
    const example = deprecationHeaders(successor);
    const headers = {
      Deprecation: { description: `RFC 9745: deprecated since ${DEPRECATED_SINCE.toISOString()}, as a structured-field date (${example.Deprecation}).`, schema: { type: "string" as const, example: example.Deprecation } },
      Link: { description: "RFC 8288: the address that replaces this one.", schema: { type: "string" as const, example: example.Link } },
    };
    for (const method of ["get", "post"] as const) {
      const op = byPath.get(`${method} ${successor}`);
      if (!op) continue;
      registry.registerPath({
        ...op,
        path,
        deprecated: true,
        summary: `${op.summary} (old address of ${successor})`,
        description: `Deprecated: use ${successor}. This address answers the same for one release more; every answer carries Deprecation and Link headers.`,
        responses: Object.fromEntries(Object.entries(op.responses).map(([code, r]) => [code, { ...r, headers: { ...("headers" in r ? r.headers : {}), ...headers } }])),
      });
    }
  }
}

let cached: ReturnType<OpenApiGeneratorV31["generateDocument"]> | undefined;

/** The OpenAPI 3.1 description of API v1, generated from the zod schemas the routes parse with. */
export function openApiDocument() {
  cached ??= new OpenApiGeneratorV31(buildRegistry().definitions).generateDocument({
    openapi: "3.1.0",
    info: {
      title: "Bandledger API",
      version: `1 (Bandledger ${SOFTWARE_VERSION})`,
      description: "Band parameters with provenance: the registry, parameter sets and their frozen releases, and the consistency checks. JSON; errors as {\"error\":{\"code\",\"message\",\"field\"}}.",
    },
    servers: [{ url: "/" }],
    security: [{ bearerToken: [] }, { browserSession: [] }],
  });
  return cached;
}
