import { eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { z } from "zod";
import { apiTokens, auditLog, parameterSets, users } from "~/.server/db/schema";
import {
  apiErrorSchema, comparisonSchema, epmCheckResultSchema, materialListSchema, nfeCheckResultSchema, quantityListSchema, recordHistorySchema, recordPageSchema,
  releaseDetailSchema, setDetailSchema, setListSchema,
} from "~/domain/api-schemas";
import { verifyReleaseText } from "~/domain/release-format";
import { hashToken } from "~/.server/tokens";
import { streamUntilAnswered } from "../support/faults";
import { startDemoServer, type DemoServer } from "./api-fixture";

// External checks of the nearly-free-electron endpoint: [Kittel] C. Kittel, Introduction to Solid State Physics,
// 8th ed., ch. 7 (two-band gap 2|U_G|); [AS] Abramowitz & Stegun, Table 20.1, Mathieu characteristic values for
// q = 5: a1 = 1.85818754, b1 = -5.79008060; [CODATA18] ħ²/2m_e = 3.80998212 eV·Å², 1 Ry = 13.605693122994 eV.
// The pseudopotential endpoint: [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966), their form factors (Ry),
// lattice constants and silicon's Eg(Γ) = 3.4 eV, all from memory.

const RATE_LIMIT = 80;
let demo: DemoServer;
const tokens: Record<string, string> = {};

type Call = { status: number; body: unknown; text: string; headers: Headers };

async function call(pathname: string, init: { token?: string | null; cookie?: string; method?: string; body?: string; headers?: Record<string, string> } = {}): Promise<Call> {
  const headers: Record<string, string> = { ...init.headers };
  if (init.token) headers.Authorization = `Bearer ${init.token}`;
  if (init.cookie) headers.Cookie = init.cookie;
  const r = await fetch(demo.url + pathname, { method: init.method ?? "GET", headers, body: init.body, redirect: "manual" });
  const text = await r.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: r.status, body, text, headers: r.headers };
}

const reader = (p: string, init: Parameters<typeof call>[1] = {}) => call(p, { token: tokens.reader, ...init });

function expectError(c: Call, status: number, code: string, field: string | null = null) {
  expect(c.status, JSON.stringify(c.body)).toBe(status);
  const parsed = apiErrorSchema.parse(c.body);
  expect(parsed.error.code).toBe(code);
  if (field !== undefined) expect(parsed.error.field).toBe(field);
  expect(parsed.error.message.length).toBeGreaterThan(10);
}

function parse<S extends z.ZodType>(schema: S, c: Call): z.infer<S> {
  expect(c.status, JSON.stringify(c.body).slice(0, 400)).toBe(200);
  return schema.parse(c.body);
}

const READ_ENDPOINTS = [
  "/api/v1/materials",
  "/api/v1/quantities",
  "/api/v1/records",
  "/api/v1/records/1/history",
  "/api/v1/sets",
  "/api/v1/sets/hemt-baseline",
  "/api/v1/sets/hemt-baseline/releases",
  "/api/v1/sets/hemt-baseline/releases/3",
  "/api/v1/sets/hemt-baseline/releases/3/download?format=json",
  "/api/v1/sets/hemt-baseline/compare?from=2&to=3",
];

beforeAll(async () => {
  demo = await startDemoServer("api", { BANDLEDGER_API_RATE_PER_MINUTE: String(RATE_LIMIT) });
  tokens.reader = await demo.token("priya.raman");
  tokens.lead = await demo.token("ravi.menon");
  tokens.deactivated = await demo.token("jonas.weber");
  tokens.revoked = await demo.token("tomas.okafor");
  tokens.burst = await demo.token("tomas.okafor");
  tokens.physics = await demo.token("hanna.lindqvist");
  await demo.t.db.update(apiTokens).set({ revokedAt: sql`NOW(3)` }).where(eq(apiTokens.tokenHash, hashToken(tokens.revoked)));
});
afterAll(async () => demo?.close());

describe("API v1 credentials", () => {
  it("answers 401 JSON with WWW-Authenticate to every read endpoint without credentials", async () => {
    for (const p of READ_ENDPOINTS) {
      const c = await call(p);
      expectError(c, 401, "unauthorized");
      expect(c.headers.get("www-authenticate")).toMatch(/^Bearer/);
    }
    expectError(await call("/api/v1/checks/nfe", { method: "POST", body: "{}", headers: { "Content-Type": "application/json" } }), 401, "unauthorized");
  });

  it("refuses a revoked token, a deactivated user's token and a header that is not a token", async () => {
    expectError(await call("/api/v1/sets", { token: tokens.revoked }), 401, "unauthorized");
    expectError(await call("/api/v1/sets", { token: tokens.deactivated }), 401, "unauthorized");
    expectError(await call("/api/v1/sets", { headers: { Authorization: "Basic dXNlcjpwYXNz" } }), 401, "unauthorized");
    expectError(await call("/api/v1/sets", { token: "blt_" + "x".repeat(43) }), 401, "unauthorized");
  });

  it("accepts the signed-in browser's session as well as a token", async () => {
    const list = parse(setListSchema, await call("/api/v1/sets", { cookie: await demo.cookie("priya.raman") }));
    expect(list.sets.map((s) => s.slug)).toContain("hemt-baseline");
  });

  it("serves the OpenAPI description without credentials", async () => {
    const c = await call("/api/v1/openapi.json");
    expect(c.status).toBe(200);
    expect((c.body as { openapi: string }).openapi).toBe("3.1.0");
  });

  it("answers unknown addresses under /api/v1 with a JSON 404", async () => {
    expectError(await reader("/api/v1/no/such/thing"), 404, "not_found");
  });
});

describe("registry endpoints", () => {
  it("GET /api/v1/materials and /api/v1/quantities", async () => {
    const m = parse(materialListSchema, await reader("/api/v1/materials"));
    expect(m.materials.find((x) => x.key === "AlGaAs")).toMatchObject({ kind: "alloy", formula: "Al(x)Ga(1-x)As", family: { key: "arsenides" } });
    // activeRecords is each material's own count of active records, not a constant.
    const [counts] = (await demo.t.pool.query(
      "SELECT m.`key` AS k, COUNT(r.id) AS n FROM materials m LEFT JOIN records r ON r.material_id = m.id AND r.status = 'active' GROUP BY m.id",
    )) as unknown as [{ k: string; n: number | string }[]];
    expect(Object.fromEntries(m.materials.map((x) => [x.key, x.activeRecords]))).toEqual(Object.fromEntries(counts.map((c) => [c.k, Number(c.n)])));
    expect(new Set(counts.map((c) => Number(c.n))).size).toBeGreaterThan(1);
    const q = parse(quantityListSchema, await reader("/api/v1/quantities"));
    expect(q.quantities.find((x) => x.key === "eg")).toMatchObject({ canonicalUnit: "eV", acceptedUnits: ["eV", "meV", "µeV"], dependsOnValley: true });
    expect(q.quantities.map((x) => x.key)).not.toContain("potential_un");
  });

  it("GET /api/v1/records pages by cursor through every match exactly once", async () => {
    const [{ n }] = (await demo.t.pool.query(
      "SELECT COUNT(*) AS n FROM records r JOIN materials m ON m.id = r.material_id JOIN quantities q ON q.id = r.quantity_id WHERE m.`key` = 'GaAs' AND q.`key` = 'eg' AND r.status = 'active'",
    ))[0] as { n: number }[];
    const seen: number[] = [];
    let cursor: string | null = null;
    let pages = 0;
    do {
      const page: z.infer<typeof recordPageSchema> = parse(recordPageSchema, await reader(`/api/v1/records?material=GaAs&quantity=eg&limit=2${cursor ? `&cursor=${cursor}` : ""}`));
      expect(page.records.length).toBeLessThanOrEqual(2);
      seen.push(...page.records.map((r) => r.id));
      cursor = page.nextCursor;
      pages++;
    } while (cursor && pages < 10);
    expect(seen).toHaveLength(Number(n));
    expect(new Set(seen).size).toBe(seen.length);
    expect([...seen].sort((a, b) => a - b)).toEqual(seen);
    const fit = parse(recordPageSchema, await reader("/api/v1/records?material=GaAs&quantity=eg&valley=G&limit=100")).records.find((r) => r.temperatureKind === "fit0");
    expect(fit?.current).toMatchObject({ value: "1.519", unit: "eV", source: { doi: "10.1063/1.1368156" } });
  });

  it("GET /api/v1/records shows retired records only when asked", async () => {
    const active = parse(recordPageSchema, await reader("/api/v1/records?material=GaAs&quantity=lattice_a"));
    expect(active.records.map((r) => r.temperatureK)).toEqual(["300"]);
    const all = parse(recordPageSchema, await reader("/api/v1/records?material=GaAs&quantity=lattice_a&status=all"));
    expect(all.records.find((r) => r.temperatureK === "295")).toMatchObject({ status: "retired", current: null });
  });

  it("GET /api/v1/records refuses a bad limit, cursor or valley with 400 naming the parameter", async () => {
    expectError(await reader("/api/v1/records?limit=0"), 400, "invalid_request", "limit");
    expectError(await reader("/api/v1/records?limit=501"), 400, "invalid_request", "limit");
    expectError(await reader("/api/v1/records?cursor=not-a-cursor"), 400, "invalid_cursor", "cursor");
    expectError(await reader("/api/v1/records?valley=Q"), 400, "invalid_request", "valley");
  });

  it("GET /api/v1/records/{id}/history lists every revision newest first", async () => {
    const page = parse(recordPageSchema, await reader("/api/v1/records?material=GaAs&quantity=eg&valley=G&limit=100"));
    const gap300 = page.records.find((r) => r.temperatureK === "300")!;
    const h = parse(recordHistorySchema, await reader(`/api/v1/records/${gap300.id}/history`));
    expect(h.revisions.map((r) => [r.seq, r.value, r.state])).toEqual([[3, "1.4225", "current"], [2, "1.4225", "superseded"], [1, "1.424", "superseded"]]);
    expect(h.revisions[2].source?.bibtexKey).toBe("SzeNg2007");
    expect(h.record.current?.id).toBe(h.revisions[0].id);
    expectError(await reader("/api/v1/records/999999/history"), 404, "not_found", "id");
    expectError(await reader("/api/v1/records/abc/history"), 400, "invalid_request", "id");
  });
});

describe("set endpoints", () => {
  it("GET /api/v1/sets and /api/v1/sets/{slug}", async () => {
    const list = parse(setListSchema, await reader("/api/v1/sets"));
    expect(list.sets.find((s) => s.slug === "hemt-baseline")?.latestRelease?.number).toBe(3);
    expect(list.sets.find((s) => s.slug === "ingaas-photodiode")?.latestRelease).toBeNull();
    const detail = parse(setDetailSchema, await reader("/api/v1/sets/hemt-baseline"));
    expect(detail.releases.map((r) => r.number)).toEqual([3, 2, 1]);
    expect(detail.members).toHaveLength(detail.releases[0].itemCount);
    expect(detail.members.every((m) => m.sinceLastRelease === "unchanged")).toBe(true);
    expectError(await reader("/api/v1/sets/no-such-set"), 404, "not_found");
  });

  it("GET /api/v1/sets/{slug}/releases and /releases/{number}", async () => {
    const list = await reader("/api/v1/sets/hemt-baseline/releases");
    expect((list.body as { releases: { number: number }[] }).releases.map((r) => r.number)).toEqual([3, 2, 1]);
    const r = parse(releaseDetailSchema, await reader("/api/v1/sets/hemt-baseline/releases/3"));
    expect(r).toMatchObject({ number: 3, set: { slug: "hemt-baseline" }, downloads: { json: "/sets/hemt-baseline/releases/3.json" } });
    expectError(await reader("/api/v1/sets/hemt-baseline/releases/9"), 404, "not_found");
    expectError(await reader("/api/v1/sets/hemt-baseline/releases/abc"), 400, "invalid_request", "number");
    expectError(await reader("/api/v1/sets/no-such-set/releases/1"), 404, "not_found");
  });

  it("GET …/download in both formats; a download by token is audited, one by the browser is not", async () => {
    const before = await demo.t.db.select({ n: sql<number>`COUNT(*)` }).from(auditLog).where(eq(auditLog.action, "release.downloaded"));
    const json = await reader("/api/v1/sets/hemt-baseline/releases/2/download?format=json");
    expect(json.status).toBe(200);
    expect(json.headers.get("content-type")).toMatch(/^application\/json/);
    const meta = parse(releaseDetailSchema, await reader("/api/v1/sets/hemt-baseline/releases/2"));
    expect(await verifyReleaseText(json.text)).toMatchObject({ ok: true, sha256: meta.sha256 });
    const csv = await reader("/api/v1/sets/hemt-baseline/releases/2/download?format=csv");
    expect(csv.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(await verifyReleaseText(csv.text)).toMatchObject({ ok: true, sha256: meta.sha256 });
    expectError(await reader("/api/v1/sets/hemt-baseline/releases/2/download?format=xml"), 400, "invalid_request", "format");
    expectError(await reader("/api/v1/sets/hemt-baseline/releases/7/download"), 404, "not_found");
    await call("/api/v1/sets/hemt-baseline/releases/2/download?format=json", { cookie: await demo.cookie("priya.raman") });
    const rows = await demo.t.db.select().from(auditLog).where(eq(auditLog.action, "release.downloaded")).orderBy(auditLog.id);
    expect(rows.length - Number(before[0].n)).toBe(2);
    const priya = await demo.userId("priya.raman");
    expect(rows.slice(-2).map((r) => [r.actorId, (r.detail as { format: string }).format, (r.detail as { via: string }).via])).toEqual([[priya, "json", "token"], [priya, "csv", "token"]]);
  });

  it("GET /sets/{slug}/releases/{n}.json without credentials sends a browser to sign in", async () => {
    const c = await call("/sets/hemt-baseline/releases/3.json");
    expect(c.status).toBe(302);
    expect(c.headers.get("location")).toMatch(/^\/sign-in\?returnTo=/);
  });

  it("GET /api/v1/sets/{slug}/compare between releases and with the current registry", async () => {
    const c = parse(comparisonSchema, await reader("/api/v1/sets/hemt-baseline/compare?from=2&to=3"));
    expect(c.added.map((e) => e.label)).toEqual(["AlGaAs Eg (Γ, x = 0.3, 300 K)"]);
    expect(c.changed[0]).toMatchObject({ label: "GaAs Eg (Γ, 300 K)", old: { revisionSeq: 2 }, new: { revisionSeq: 3 } });
    const current = parse(comparisonSchema, await reader("/api/v1/sets/hemt-baseline/compare?from=3"));
    expect(current).toMatchObject({ to: { release: "current", sha256: null }, added: [], removed: [], changed: [] });
    expectError(await reader("/api/v1/sets/hemt-baseline/compare?from=3&to=3"), 422, "invalid", "to");
    expectError(await reader("/api/v1/sets/hemt-baseline/compare?from=x"), 400, "invalid_request", "from");
    expectError(await reader("/api/v1/sets/hemt-baseline/compare"), 400, "invalid_request", "from");
    expectError(await reader("/api/v1/sets/hemt-baseline/compare?from=9&to=current"), 404, "not_found");
  });
});

describe("POST /api/v1/sets/{slug}/releases (freeze)", () => {
  const body = (v?: number) => JSON.stringify(v === undefined ? {} : { expectedVersion: v });
  const post = async (init: { token?: string; person?: string; origin?: string | null; body?: string; slug?: string }) => {
    const headers: Record<string, string> = { "Content-Type": "application/json" };
    if (init.origin !== null) headers.Origin = init.origin ?? demo.url;
    return call(`/api/v1/sets/${init.slug ?? "hemt-baseline"}/releases`, {
      method: "POST", token: init.token, cookie: init.person ? await demo.cookie(init.person) : undefined, body: init.body ?? body(), headers,
    });
  };

  it("is refused to tokens (read-only), to readers and contributors, and to another site's page", async () => {
    expectError(await post({ token: tokens.lead }), 403, "read_only_token");
    expectError(await post({ token: tokens.reader }), 403, "read_only_token");
    expectError(await post({ person: "priya.raman" }), 403, "forbidden");
    expectError(await post({ person: "tomas.okafor" }), 403, "forbidden");
    expectError(await post({ person: "ravi.menon", origin: "http://evil.test" }), 403, "foreign_origin");
    expectError(await post({ person: "ravi.menon", origin: null }), 403, "foreign_origin");
    expectError(await post({}), 401, "unauthorized");
  });

  it("answers 400 to a body that is not JSON, 404 to an unknown set, 409 to a stale version, 422 to an empty set", async () => {
    expectError(await post({ person: "ravi.menon", body: "{not json" }), 400, "invalid_json");
    expectError(await post({ person: "ravi.menon", body: JSON.stringify({ expectedVersion: "one" }) }), 400, "invalid_request", "expectedVersion");
    expectError(await post({ person: "ravi.menon", slug: "no-such-set" }), 404, "not_found");
    const detail = parse(setDetailSchema, await reader("/api/v1/sets/hemt-baseline"));
    expectError(await post({ person: "ravi.menon", body: body(detail.version + 5) }), 409, "conflict");
    const [u] = await demo.t.db.select({ id: users.id }).from(users).where(eq(users.email, "ravi.menon@kestrel-devices.test"));
    await demo.t.db.insert(parameterSets).values({ slug: "empty-api", name: "Empty", purpose: "nothing", createdBy: u.id });
    expectError(await post({ person: "ravi.menon", slug: "empty-api" }), 422, "invalid");
  });

  it("freezes release 4 for a lead with the version shown, and the release downloads and verifies", async () => {
    const detail = parse(setDetailSchema, await reader("/api/v1/sets/hemt-baseline"));
    const c = await post({ person: "ravi.menon", body: body(detail.version) });
    expect(c.status).toBe(201);
    const release = releaseDetailSchema.parse(c.body);
    expect(release).toMatchObject({ number: 4, itemCount: detail.members.length, frozenBy: "Ravi Menon" });
    const dl = await fetch(`${demo.url}${release.downloads.json}`, { headers: { Authorization: `Bearer ${tokens.reader}` } });
    expect(await verifyReleaseText(await dl.text())).toMatchObject({ ok: true, sha256: release.sha256 });
    expectError(await post({ person: "ravi.menon", body: body(detail.version) }), 409, "conflict");
  });
});

describe("POST /api/v1/checks/nfe", () => {
  const nfe = (payload: unknown, token = tokens.reader) =>
    call("/api/v1/checks/nfe", { method: "POST", token, body: JSON.stringify(payload), headers: { "Content-Type": "application/json" } });

  it("gives the two-band result 2|U| for a weak potential [Kittel]", async () => {
    const r = parse(nfeCheckResultSchema, await nfe({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.1 }], statedGapEv: 0.2, toleranceEv: 0.01 }));
    expect(r.firstOrder.gapEv).toBe("0.200000000000");
    expect(Math.abs(Number(r.centralEquation.gapEv) - 0.2)).toBeLessThan(0.01);
    expect(r.verdict).toBe("pass");
    expect(r.codataEdition).toBe("CODATA 2018");
  });

  it("converges to the Mathieu band edges for q = 5 [AS], [CODATA18]", async () => {
    const periodAngstrom = 5.65325;
    const epsilon = 3.80998212 * (Math.PI / periodAngstrom) ** 2;
    const u = 5 * epsilon;
    const r = parse(nfeCheckResultSchema, await nfe({ periodAngstrom, coefficients: [{ n: 1, valueEv: u }] }));
    const expectedGap = epsilon * (1.85818754 - -5.79008060);
    expect(Math.abs(Number(r.centralEquation.gapEv) - expectedGap) / expectedGap).toBeLessThan(1e-6);
    expect(r.verdict).toBe("none");
  });

  it("says converged and how many plane waves; a basis stopped by the cap is converged: false with a note", async () => {
    const ordinary = parse(nfeCheckResultSchema, await nfe({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.1 }] }));
    expect(ordinary.centralEquation.converged).toBe(true);
    expect(ordinary.centralEquation.planeWaves % 2).toBe(1);
    // Strong coefficients on a long period at a high gap: the 201-wave cap comes before convergence.
    const capped = parse(nfeCheckResultSchema, await nfe({
      periodAngstrom: 100, mass: 10, gap: 19, statedGapEv: 1, coefficients: [{ n: 1, valueEv: 10 }, { n: 2, valueEv: -10 }, { n: 3, valueEv: 10 }],
    }));
    expect(capped.centralEquation).toMatchObject({ converged: false, planeWaves: 201 });
    expect(capped.notes.join(" ")).toMatch(/did not converge/);
  });

  it("answers 422 at the field to a period or a mass too small for double precision", async () => {
    expectError(await nfe({ periodAngstrom: 1e-6, coefficients: [{ n: 1, valueEv: 0.5 }] }), 422, "invalid_physics_input", "periodAngstrom");
    expectError(await nfe({ periodAngstrom: 2, mass: 1e-5, coefficients: [{ n: 1, valueEv: 0.5 }] }), 422, "invalid_physics_input", "mass");
  });

  it("answers 400 to a malformed body and 422 to a coefficient given twice", async () => {
    expectError(await nfe({ coefficients: [{ n: 1, valueEv: 0.1 }] }), 400, "invalid_request", "periodAngstrom");
    expectError(await nfe({ periodAngstrom: 5.65, coefficients: [] }), 400, "invalid_request", "coefficients");
    expectError(await nfe({ periodAngstrom: 5.65, coefficients: [{ n: 1, valueEv: 0.1 }, { n: 1, valueEv: 0.2 }] }), 422, "duplicate_coefficient", "coefficients.1.n");
    expectError(await call("/api/v1/checks/nfe", { method: "POST", token: tokens.reader, body: "{", headers: { "Content-Type": "application/json" } }), 400, "invalid_json");
    expectError(await call("/api/v1/checks/nfe", { method: "POST", token: tokens.reader, body: "a=1", headers: { "Content-Type": "application/x-www-form-urlencoded" } }), 400, "invalid_content_type");
    expectError(await reader("/api/v1/checks/nfe"), 400, "method_not_allowed");
  });

  it("refuses a body over 256 kB with 413 while it arrives, whether its length is declared or streamed", async () => {
    const big = JSON.stringify({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.1 }], notes: "x".repeat(300 * 1024) });
    expectError(await call("/api/v1/checks/nfe", { method: "POST", token: tokens.reader, body: big, headers: { "Content-Type": "application/json" } }), 413, "too_large");
    const streamed = await streamUntilAnswered(demo.url + "/api/v1/checks/nfe", { "content-type": "application/json", authorization: `Bearer ${tokens.reader}` }, Buffer.from("[" + "0,".repeat(32 * 1024)), 64 * 1024 * 1024);
    expect(streamed.status).toBe(413);
    expect(JSON.parse(streamed.text)).toMatchObject({ error: { code: "too_large" } });
    expect(streamed.sentBytes).toBeLessThan(16 * 1024 * 1024);
  });
});

describe("POST /api/v1/checks/epm", () => {
  const epm = (payload: unknown, token = tokens.physics) =>
    call("/api/v1/checks/epm", { method: "POST", token, body: JSON.stringify(payload), headers: { "Content-Type": "application/json" } });
  const SI = { structure: "diamond", latticeAngstrom: 5.43, formFactors: { S3: -0.21, S8: 0.04, S11: 0.08 } };
  const GAAS = { structure: "zincblende", latticeAngstrom: 5.64, formFactors: { S3: -0.23, S8: 0.01, S11: 0.06, A3: 0.07, A4: 0.05, A11: 0.01 } };

  it("silicon [CB66]: Eg(Γ) = 3.4 eV within 0.1 eV, the fundamental gap along Δ near 0.85 of Γ–X, a pass", async () => {
    const r = parse(epmCheckResultSchema, await epm({ ...SI, stated: { gammaEv: 3.4 } }));
    expect(Math.abs(Number(r.gamma.gapEv) - 3.4)).toBeLessThan(0.1);
    expect(r.gamma.verdict).toBe("pass");
    expect(r.x.statedEv).toBeNull();
    expect(r.fundamental.valley).toBe("Δ");
    expect(Math.abs(Number(r.x.gammaXMinimum.fraction) - 0.85)).toBeLessThan(0.01);
    expect(r.converged).toBe(true);
    expect(r.planeWaves).toBeGreaterThan(100);
    expect(r.bands).toBeNull();
    expect(r.verdict).toBe("pass");
    expect(r.codataEdition).toBe("CODATA 2018");
    expect(Number(r.formFactorsEv.S3)).toBeCloseTo(-0.21 * 13.605693122994, 9);
  });

  it("form factors in eV give the same gaps; GaAs [CB66] is direct; the band structure comes on request", async () => {
    const ry = 13.605693122994;
    const inRy = parse(epmCheckResultSchema, await epm(SI));
    const inEv = parse(epmCheckResultSchema, await epm({ ...SI, formFactorUnit: "ev", formFactors: { S3: -0.21 * ry, S8: 0.04 * ry, S11: 0.08 * ry } }));
    for (const p of ["gamma", "x", "l"] as const) expect(Math.abs(Number(inRy[p].gapEv) - Number(inEv[p].gapEv))).toBeLessThan(1e-9);
    const gaas = parse(epmCheckResultSchema, await epm({ ...GAAS, bands: true, stated: { gammaEv: 1.519, xEv: 1.981, lEv: null } }));
    expect(gaas.fundamental.valley).toBe("Γ");
    expect(gaas.x.verdict).toBe("warn");
    expect(gaas.l.verdict).toBe("none");
    const bands = gaas.bands!;
    expect(bands.labels.map((l) => l.label)).toEqual(["L", "Γ", "X", "U|K", "Γ"]);
    expect(bands.energiesEv).toHaveLength(8);
    for (const band of bands.energiesEv) expect(band).toHaveLength(bands.distance.length);
    const gamma = bands.distance.findIndex((d) => Math.abs(d - bands.labels[1].distance) < 1e-6);
    expect(bands.energiesEv[3][gamma]).toBe(0);
    expect(Math.abs(bands.energiesEv[4][gamma] - Number(gaas.gamma.gapEv))).toBeLessThanOrEqual(bands.deviationEv + 1e-4);
  });

  it("refuses bad input at its field with a 400, never a 500", async () => {
    expectError(await epm({ ...SI, formFactors: { ...SI.formFactors, A3: 0.07 } }), 400, "invalid_request", "formFactors.A3");
    const unknown = await epm({ ...SI, formFactors: { ...SI.formFactors, S4: 0.1 } });
    expectError(unknown, 400, "invalid_request", "formFactors");
    expect(apiErrorSchema.parse(unknown.body).error.message).toMatch(/S4/);
    expectError(await epm({ ...SI, latticeAngstrom: 0 }), 400, "invalid_request", "latticeAngstrom");
    expectError(await epm({ ...SI, latticeAngstrom: -5.43 }), 400, "invalid_request", "latticeAngstrom");
    expectError(await epm({ ...SI, latticeAngstrom: "5.43" }), 400, "invalid_request", "latticeAngstrom");
    expectError(await epm({ ...SI, formFactors: { S3: "-0.21", S8: 0.04, S11: 0.08 } }), 400, "invalid_request", "formFactors.S3");
    expectError(await epm({ ...SI, formFactors: { S3: -0.21, S11: 0.08 } }), 400, "invalid_request", "formFactors.S8");
    expectError(await epm({ ...SI, formFactors: { ...SI.formFactors, S11: 2 } }), 400, "invalid_request", "formFactors.S11");
    expectError(await epm({ ...SI, structure: "wurtzite" }), 400, "invalid_request", "structure");
    expectError(await epm({ ...SI, formFactorUnit: "hartree" }), 400, "invalid_request", "formFactorUnit");
    expectError(await epm({ ...SI, stated: { gammaEv: -1 } }), 400, "invalid_request", "stated.gammaEv");
    expectError(await epm({ ...SI, stated: { gamma: 3.4 } }), 400, "invalid_request", "stated");
    expectError(await epm({ ...SI, toleranceEv: 0 }), 400, "invalid_request", "toleranceEv");
    expectError(await call("/api/v1/checks/epm", { method: "POST", token: tokens.physics, body: '{"structure":"diamond","latticeAngstrom":NaN}', headers: { "Content-Type": "application/json" } }), 400, "invalid_json");
    expectError(await call("/api/v1/checks/epm", { method: "POST", token: tokens.physics, body: "structure=diamond", headers: { "Content-Type": "application/x-www-form-urlencoded" } }), 400, "invalid_content_type");
    expectError(await call("/api/v1/checks/epm", { token: tokens.physics }), 400, "method_not_allowed");
    expectError(await call("/api/v1/checks/epm", { method: "POST", body: JSON.stringify(SI), headers: { "Content-Type": "application/json" } }), 401, "unauthorized");
  });
});

describe("rate limit", () => {
  it(`answers 429 with Retry-After past ${RATE_LIMIT} requests a minute from one token, and counts each token apart`, async () => {
    let limited: Call | null = null;
    let ok = 0;
    for (let i = 0; i < RATE_LIMIT + 5 && !limited; i++) {
      const c = await call("/api/v1/quantities", { token: tokens.burst });
      if (c.status === 429) limited = c;
      else ok++;
    }
    expect(limited).not.toBeNull();
    expect(ok).toBeLessThanOrEqual(RATE_LIMIT);
    expectError(limited!, 429, "rate_limited");
    const retry = Number(limited!.headers.get("retry-after"));
    expect(Number.isInteger(retry) && retry >= 1 && retry <= 61).toBe(true);
    expect((await call("/api/v1/quantities", { token: tokens.lead })).status).toBe(200);
  });
});
