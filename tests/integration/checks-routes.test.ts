import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, materials, quantities, records, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import type { CheckReportResponse } from "~/domain/check-report";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { HttpClient } from "../support/route-access";

// Against the production build over the demo registry: [V01] GaAs values (from memory), [Kane57], [Var67];
// [Kittel] ch. 7 for the two-band gap 2|U_1|.

let t: TestDatabase;
let sink: Sink;
let server: AppServer;
const ids = new Map<string, number>();

beforeAll(async () => {
  t = await freshDatabase("checksroutes");
  await loadDemo(t.db);
  for (const u of await t.db.select().from(users)) ids.set(u.email.split("@")[0], u.id);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-checks-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  server = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir });
});
afterAll(async () => {
  await server?.stop();
  await sink?.close();
  await t?.drop();
});

const as = (person: string) => HttpClient.signedIn(server.url, ids.get(person)!);

describe("/checks/report", () => {
  it("answers a GET with the proposal's check report as JSON (GaAs m*e 0.067 m0 passes Kane)", async () => {
    const client = await as("priya.raman");
    const response = await client.get("/checks/report?kind=new_record&material=GaAs&quantity=me&valley=G&value=0.067&unit=m0");
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toMatch(/application\/json/);
    const body = (await response.json()) as CheckReportResponse;
    expect(body.report?.results.find((r) => r.kind === "kane")).toMatchObject({ status: "pass" });
    expect(body.report?.origin).toBe("proposal");
  });

  it("takes the proposal form's fields as a POST from this site, and JSON too", async () => {
    const client = await as("tomas.okafor");
    const form = await client.post("/checks/report", {
      kind: "new_record", material: "GaAs", quantity: "eg", temperatureMode: "stated", temperatureK: "310", valley: "G", value: "0.1", unit: "eV",
      "potentialCoefficients.0.n": "1", "potentialCoefficients.0.valueEv": "0.1", periodAngstrom: "5.65325",
    });
    expect(form.status).toBe(200);
    const nfe = ((await form.json()) as CheckReportResponse).report?.results.find((r) => r.kind === "nfe");
    expect(nfe?.status).toBe("fail");
    const json = await client.request("/checks/report", {
      method: "POST",
      headers: { "content-type": "application/json" },
      origin: server.url,
    });
    expect(json.status).toBe(200);
    expect(((await json.json()) as CheckReportResponse).report).toBeNull();
  });

  it("refuses a body over 1 MB with 413, as JSON or as a form, and says why", async () => {
    const client = await as("tomas.okafor");
    const notes = "x".repeat(1100 * 1024);
    const bigJson = await fetch(server.url + "/checks/report", {
      method: "POST", body: JSON.stringify({ kind: "new_record", material: "GaAs", notes }),
      headers: { "content-type": "application/json", origin: server.url, cookie: client.cookieHeader() },
    });
    expect(bigJson.status).toBe(413);
    expect(((await bigJson.json()) as { message: string }).message).toMatch(/at most 1\.0 MB/);
    const bigForm = await client.post("/checks/report", { kind: "new_record", material: "GaAs", notes });
    expect(bigForm.status).toBe(413);
  });

  it("refuses a POST from another site, and sends a visitor without a session to sign in", async () => {
    const client = await as("tomas.okafor");
    const foreign = await client.post("/checks/report", { kind: "new_record", material: "GaAs" }, { origin: "https://elsewhere.example" });
    expect(foreign.status).toBe(403);
    expect(await foreign.json()).toMatchObject({ error: { code: "foreign_origin" } });
    const anonymous = await new HttpClient(server.url).get("/checks/report?material=GaAs");
    expect(anonymous.status).toBe(302);
    expect(anonymous.headers.get("location")).toMatch(/^\/sign-in\?returnTo=/);
  });
});

describe("/checks/nfe and the record page without JavaScript", () => {
  it("renders the verdict of the query in the page (U_1 = 0.1 eV, stated 0.2 eV passes)", async () => {
    const html = await (await (await as("priya.raman")).get("/checks/nfe?period=5.65325&unit=angstrom&n=1&u=0.1&stated=0.2")).text();
    expect(html).toContain('data-nfe-result="pass"');
    expect(html).toContain("central equation (13 plane waves)");
  });

  it("keeps a wrong input in its field with the message beside it", async () => {
    const response = await (await as("priya.raman")).get("/checks/nfe?period=abc&n=1&u=0.1");
    const html = await response.text();
    expect(html).toMatch(/<input[^>]*id="nfe-period"[^>]*aria-invalid="true"/);
    expect(html).toMatch(/value="abc"/);
    expect(html).toContain("“abc” is not a decimal number.");
  });
});

// [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966): the demo's GaAs form factors (Ry), from memory.
async function formFactorRecord(material: string, quantity: string): Promise<number> {
  const [row] = await t.db
    .select({ id: records.id })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(and(eq(materials.key, material), eq(quantities.key, quantity)));
  return row.id;
}

describe("the pseudopotential check on record pages and live proposals", () => {
  it("shows GaAs's V_S(3) record with three gap results, the caution and a link to the band structure", async () => {
    const id = await formFactorRecord("GaAs", "ff_vs3");
    const html = await (await (await as("priya.raman")).get(`/records/${id}`)).text();
    expect(html.match(/data-check="epm"/g)).toHaveLength(3);
    expect(html).toContain("Pseudopotential gap at X");
    expect(html).toContain("data-epm-caution");
    expect(html).toMatch(/href="\/checks\/epm\?structure=zincblende&amp;lattice=5\.65325/);
  });

  it("checks a proposed form factor as typed (the proposal form's live GET): +0.23 Ry for V_S(3) fails", async () => {
    const id = await formFactorRecord("GaAs", "ff_vs3");
    const client = await as("tomas.okafor");
    const response = await client.get(`/checks/report?kind=revision&recordId=${id}&value=0.23&unit=Ry`);
    expect(response.status).toBe(200);
    const body = (await response.json()) as CheckReportResponse;
    expect(body.report?.subject.value).toBe("3.12930941828862");
    expect(body.report?.results.filter((r) => r.kind === "epm").some((r) => r.status === "fail")).toBe(true);
    const typo = (await (await client.get(`/checks/report?kind=revision&recordId=${id}&value=-0.23&unit=Rydberg`)).json()) as CheckReportResponse;
    expect(typo.report?.status).toBe("none");
    expect(typo.message).toMatch(/“Rydberg” is not accepted here; use eV, meV, Ry, mRy/);
  });
});

describe("/admin/tolerances", () => {
  it("keeps a wrong tolerance at its field, saves a right one with an audit entry, and is for admins only", async () => {
    const admin = await as("ines.carvalho");
    const page = await (await admin.get("/admin/tolerances")).text();
    expect(page).toContain("Check tolerances");
    const refused = await admin.post("/admin/tolerances", { quantity: "me", tolerance: "-0.02" });
    expect(refused.status).toBe(400);
    expect(await refused.text()).toContain("A tolerance is larger than zero.");
    const saved = await admin.post("/admin/tolerances", { quantity: "me", tolerance: "0.015" });
    expect(saved.status).toBe(302);
    const [me] = await t.db.select().from(quantities).where(eq(quantities.key, "me"));
    expect(me.checkTolerance).toBe("0.015");
    const [entry] = await t.db.select().from(auditLog).where(eq(auditLog.action, "checks.tolerance_set"));
    expect(entry).toMatchObject({ actorId: ids.get("ines.carvalho"), targetId: "me", detail: { from: null, to: "0.015" } });
    const lead = await (await as("ravi.menon")).post("/admin/tolerances", { quantity: "eg", tolerance: "0.5" });
    expect(lead.status).toBe(403);
    // The pseudopotential check's tolerance: 0.15 eV from the catalogue, on the V_S(3) row, capped at 1 eV.
    expect(page).toContain("pseudopotential check of the gaps at Γ, X, L");
    expect((await admin.post("/admin/tolerances", { quantity: "ff_vs3", tolerance: "1.5" })).status).toBe(400);
    expect((await admin.post("/admin/tolerances", { quantity: "ff_vs3", tolerance: "0.2" })).status).toBe(302);
    const [vs3] = await t.db.select().from(quantities).where(eq(quantities.key, "ff_vs3"));
    expect(vs3.checkTolerance).toBe("0.2");
  });
});
