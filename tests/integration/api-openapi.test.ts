import type { RouteConfigEntry } from "@react-router/dev/routes";
import { Validator } from "@seriousme/openapi-schema-validator";
import { describe, expect, it } from "vitest";
import { openApiDocument } from "~/.server/api/openapi";
import routes from "~/routes";

// Validated against the OpenAPI 3.1 JSON Schema shipped in @seriousme/openapi-schema-validator (offline, ajv).

type Doc = { openapi: string; paths: Record<string, Record<string, { responses: Record<string, unknown> }>>; components: { schemas: Record<string, unknown> } };

function apiPaths(entries: RouteConfigEntry[]): string[] {
  return entries.flatMap((e) => [e.path ?? "", ...apiPaths(e.children ?? [])]).filter((p) => p.startsWith("api/v1/") && !p.endsWith("*"));
}

describe("the OpenAPI description of API v1", () => {
  it("is a valid OpenAPI 3.1 document", async () => {
    const doc = openApiDocument();
    const result = await new Validator().validate(JSON.parse(JSON.stringify(doc)));
    expect(result.errors ?? []).toEqual([]);
    expect(result.valid).toBe(true);
    expect(doc.openapi).toBe("3.1.0");
    const broken = JSON.parse(JSON.stringify(doc));
    delete broken.info;
    broken.paths["/api/v1/sets"].get.responses = "none";
    expect((await new Validator().validate(broken)).valid).toBe(false);
  });

  it("describes every /api/v1 route of app/routes.ts, and no other", () => {
    const doc = openApiDocument() as unknown as Doc;
    const documented = Object.keys(doc.paths).map((p) => p.replace(/^\//, "").replace(/\{(\w+)\}/g, ":$1")).sort();
    expect(documented).toEqual([...new Set(apiPaths(routes as RouteConfigEntry[]))].sort());
  });

  it("states the JSON error body for every error status and names every schema it refers to", () => {
    const doc = openApiDocument() as unknown as Doc;
    const text = JSON.stringify(doc);
    for (const ref of text.match(/#\/components\/schemas\/[A-Za-z0-9]+/g) ?? []) {
      expect(doc.components.schemas[ref.split("/").pop()!], ref).toBeTruthy();
    }
    for (const [path, methods] of Object.entries(doc.paths)) {
      for (const [method, op] of Object.entries(methods)) {
        for (const [status, response] of Object.entries(op.responses)) {
          if (Number(status) >= 400) expect(JSON.stringify(response), `${method} ${path} ${status}`).toContain("#/components/schemas/Error");
        }
      }
    }
    expect(doc.components.schemas.ReleaseItem).toBeTruthy();
  });
});
