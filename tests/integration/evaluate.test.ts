import { execFile } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, readFileSync } from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiErrorSchema, evaluationSchema } from "~/domain/api-schemas";
import { parseReleaseJson } from "~/domain/release-format";
import packageJson from "../../package.json";
import { startDemoServer, type DemoServer } from "./api-fixture";

// A frozen release evaluated at a pipeline's conditions, through the API and `bandledger evaluate`, over the demo
// data. Expected values by hand from the pinned revisions, with their sources: Varshni (1967) with the [V01]
// parameters (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), table values from memory):
// GaAs Γ 1.4224821 eV at 300 K and 1.507596 eV at 77 K; the same paper's AlGaAs bowing C = −0.127 + 1.310x eV; its
// InAs, GaAs and InP lattice constants for the lattice match of In(x)Ga(1−x)As on InP (Vegard 1921).

let demo: DemoServer;
let token: string;
let dir: string;
let proxy: http.Server;
let proxyUrl: string;
let tamper = false;

type Run = { code: number; stdout: string; stderr: string };

function cli(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile(process.execPath, ["node_modules/tsx/dist/cli.mjs", "app/cli/main.ts", ...args], { env: { ...process.env, BANDLEDGER_TOKEN: "" }, timeout: 30_000 }, (error, stdout, stderr) => {
      resolve({ code: error ? Number((error as { code?: number }).code ?? 1) : 0, stdout, stderr });
    });
  });
}

const evaluate = (args: string[], url = demo.url) => cli(["evaluate", ...args, "--url", url, "--token", token]);

async function api(pathname: string): Promise<{ status: number; text: string; body: unknown; headers: Headers }> {
  const r = await fetch(demo.url + pathname, { headers: { Authorization: `Bearer ${token}` } });
  const text = await r.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* CSV */
  }
  return { status: r.status, text, body, headers: r.headers };
}

const EVALUATE = "/api/v1/sets/hemt-baseline/releases/3/evaluate";

// A forwarding proxy that changes one digit of a pinned value in the release download, as a broken cache would.
function startProxy(): Promise<void> {
  proxy = http.createServer(async (req, res) => {
    const upstream = await fetch(demo.url + req.url, { headers: { authorization: req.headers.authorization ?? "", "accept-encoding": "identity" } });
    const body = Buffer.from(await upstream.arrayBuffer());
    const headers = Object.fromEntries([...upstream.headers].filter(([k]) => !["content-length", "content-encoding", "transfer-encoding", "connection", "keep-alive", "repr-digest"].includes(k)));
    if (tamper && req.url?.includes("/download") && upstream.status === 200) {
      const at = body.indexOf(Buffer.from('"value": "1.519"')) + 10;
      body[at] = 0x32;
    }
    res.writeHead(upstream.status, headers);
    res.end(body);
  });
  return new Promise((resolve) => proxy.listen(0, "127.0.0.1", () => {
    proxyUrl = `http://127.0.0.1:${(proxy.address() as AddressInfo).port}`;
    resolve();
  }));
}

beforeAll(async () => {
  demo = await startDemoServer("evaluate");
  token = await demo.token("priya.raman");
  dir = mkdtempSync(path.join(os.tmpdir(), "bl-evaluate-"));
  await startProxy();
});
afterAll(async () => {
  if (proxy) await new Promise<void>((r) => proxy.close(() => r()));
  await demo?.close();
});

type Evaluation = ReturnType<typeof evaluationSchema.parse>;

async function evaluation(query: string): Promise<Evaluation> {
  const r = await api(`${EVALUATE}?${query}`);
  expect(r.status, r.text.slice(0, 300)).toBe(200);
  return evaluationSchema.parse(r.body);
}

function valueOf(e: Evaluation, material: string, id: string) {
  const v = e.materials.find((m) => m.key === material)?.values.find((x) => x.id === id);
  if (!v) throw new Error(`no ${id} of ${material}: ${JSON.stringify(e.materials.find((m) => m.key === material)?.missing)}`);
  return v;
}

/** Agrees with a printed value to every digit printed. */
function expectPrinted(actual: string, printed: string) {
  const decimals = printed.split(".")[1]?.length ?? 0;
  expect(Math.abs(Number(actual) - Number(printed)), `${actual} against ${printed}`).toBeLessThanOrEqual(0.5 * 10 ** -decimals * (1 + 1e-9));
}

describe("GET /api/v1/sets/{slug}/releases/{n}/evaluate over the demo release", () => {
  it("GaAs at 300 K and 77 K: Γ by Varshni from the pinned 0 K fit, 1.4224821 and 1.507596 eV [V01, Varshni 1967, calc]", async () => {
    const release = parseReleaseJson(await (await fetch(`${demo.url}/api/v1/sets/hemt-baseline/releases/3/download`, { headers: { Authorization: `Bearer ${token}` } })).text());
    const warm = await evaluation("temperature=300&material=GaAs");
    expect(warm.release).toEqual({ sha256: release.sha256, set: "hemt-baseline", setName: "HEMT baseline", number: 3, codataEdition: "CODATA 2018", softwareVersion: release.content.release.softwareVersion });
    expect(warm.evaluatedWith).toMatchObject({ bandledgerVersion: packageJson.version, codataEdition: "CODATA 2018" });
    const gamma = valueOf(warm, "GaAs", "eg-G");
    expectPrinted(gamma.value, "1.4224821");
    // The revisions it names are the ones the release pins.
    const pinned = new Set(release.content.items.map((i) => i.revisionId));
    expect(gamma.inputs.every((i) => i.revisionId !== null && pinned.has(i.revisionId))).toBe(true);
    expect(gamma.stated?.value).toBe("1.4225");
    // [V01] states no uncertainties: named as not stated, never a zero.
    expect(gamma).toMatchObject({ standardUncertainty: null, uncertaintyStatus: "not-stated", uncertaintyNotStated: ["Eg(Γ, 0 K)", "α(Γ)", "β(Γ)"] });
    expectPrinted(valueOf(await evaluation("temperature=77&material=GaAs"), "GaAs", "eg-G").value, "1.507596");
    // a(77 K) = 5.65325 + (77 − 300)·3.88e-5 Å (calc), and the Kane mass from the pinned Ep, F, Δso with Eg(Γ, 77 K).
    const cold = await evaluation("temperature=77&material=GaAs");
    expect(Number(valueOf(cold, "GaAs", "lattice-a").value)).toBeCloseTo(5.65325 - 223 * 3.88e-5, 10);
    const eg = 1.519 - (0.5405e-3 * 77 ** 2) / (77 + 204);
    expect(Number(valueOf(cold, "GaAs", "kane-me").value)).toBeCloseTo(1 / (1 - 3.88 + (28.8 * (eg + 0.341 * (2 / 3))) / (eg * (eg + 0.341))), 10);
  });

  it("Al(0.3)Ga(0.7)As at 300 K: 1.84079 eV by [V01] bowing, beside the measured 1.838 ± 0.003 eV the release carries", async () => {
    const release = parseReleaseJson(await (await fetch(`${demo.url}/sets/hemt-baseline/releases/3.json`, { headers: { Authorization: `Bearer ${token}` } })).text());
    // The seed states 1838 ± 3 meV: the release keeps it in eV, with its uncertainty.
    expect(release.content.items.find((i) => i.material.key === "AlGaAs" && i.quantity.key === "eg")).toMatchObject({ value: "1.838", uncertainty: "0.003" });
    const e = await evaluation("temperature=300&material=AlGaAs&x=0.3&substrate=GaAs");
    const gamma = valueOf(e, "AlGaAs", "eg-G");
    expectPrinted(gamma.value, "1.84079");
    expect(gamma.stated).toMatchObject({ value: "1.838", uncertainty: "0.003" });
    expectPrinted(valueOf(e, "AlGaAs", "lattice-a").value, "5.655605");
    // The release pins no X fits and no AlAs Ep, F, Δso: named, not guessed.
    expect(e.materials[0].missing.join(" ")).toMatch(/Eg\(X\): AlAs and GaAs have no 0 K Varshni fit at X in HEMT baseline release 3/);
    expect(e.materials[0].missing.join(" ")).toMatch(/Kane formula: AlAs Ep, AlAs F, AlAs Δso missing/);
    // On GaAs: AlAs is a little larger, Δa/a = 0.3·(5.6611 − 5.65325)/5.65325 in per cent (calc).
    expect(Number(valueOf(e, "AlGaAs", "mismatch").value)).toBeCloseTo((100 * 0.3 * (5.6611 - 5.65325)) / 5.65325, 10);
  });

  it("In(x)Ga(1−x)As on InP, once the photodiode set is frozen: lattice-matched at x = 0.534 [V01, Vegard 1921 calc]", async () => {
    const frozen = await fetch(`${demo.url}/api/v1/sets/ingaas-photodiode/releases`, {
      method: "POST", body: "{}", headers: { "Content-Type": "application/json", Origin: demo.url, Cookie: await demo.cookie("hanna.lindqvist") },
    });
    expect(frozen.status).toBe(201);
    const r = await api("/api/v1/sets/ingaas-photodiode/releases/1/evaluate?temperature=300&material=InGaAs&x=0.53&substrate=InP");
    expect(r.status, r.text.slice(0, 300)).toBe(200);
    const e = evaluationSchema.parse(r.body);
    const x = valueOf(e, "InGaAs", "lattice-match-x");
    expect(Number(x.value)).toBeCloseTo((5.8697 - 5.65325) / (6.0583 - 5.65325), 10);
    expect(x.value.slice(0, 5)).toBe("0.534");
    // The photodiode set pins GaAs Eg(0) without its α and β: the Γ gap of the alloy is named as missing.
    expect(e.materials[0].missing.join(" ")).toMatch(/Eg\(Γ\): GaAs has no 0 K Varshni fit at Γ in InGaAs photodiode release 1/);
  });

  it("answers 400 naming the field: negative or non-numeric temperature, x outside 0–1, an unknown material, one not in the release", async () => {
    const cases: [string, string][] = [
      ["temperature=-4", "temperature"],
      ["temperature=warm", "temperature"],
      ["material=GaAs", "temperature"],
      ["temperature=77&material=AlGaAs&x=1.5", "x"],
      ["temperature=77&material=AlGaAs&x=-0.1", "x"],
      ["temperature=77&material=AlGaAs", "x"],
      ["temperature=77&material=Unobtainium", "material"],
      ["temperature=77&material=InP", "material"],
      ["temperature=77&substrate=InP", "substrate"],
      ["temperature=77&format=xml", "format"],
    ];
    for (const [query, field] of cases) {
      const r = await api(`${EVALUATE}?${query}`);
      expect(r.status, `${query}: ${r.text}`).toBe(400);
      const error = apiErrorSchema.parse(r.body).error;
      expect(error.field, query).toBe(field);
      expect(error.message.startsWith(`${field}: `), error.message).toBe(true);
    }
    expect(apiErrorSchema.parse((await api(`${EVALUATE}?temperature=77&material=Unobtainium`)).body).error.message).toMatch(/no material Unobtainium in the registry/);
    expect(apiErrorSchema.parse((await api(`${EVALUATE}?temperature=77&material=InP`)).body).error.message).toMatch(/InP is not in HEMT baseline release 3/);
    expect((await api(`${EVALUATE}?temperature=77&temprature=300`)).status).toBe(400);
    expect((await api("/api/v1/sets/hemt-baseline/releases/9/evaluate?temperature=77")).status).toBe(404);
  });
});

describe("bandledger evaluate", () => {
  const args = ["hemt-baseline", "3", "--temperature", "77", "--material", "AlGaAs", "--x", "0.3", "--substrate", "GaAs"];

  it("writes the same bytes on every run and after a server restart, the same bytes the API serves, with the release hash at the top", async () => {
    const first = path.join(dir, "first.json");
    const second = path.join(dir, "second.json");
    const run = await evaluate([...args, "--out", first]);
    expect(run.stderr).toBe("");
    expect(run.code).toBe(0);
    const sha = (await api(`${EVALUATE}?temperature=77`)).headers.get("x-bandledger-release-sha256")!;
    expect(run.stdout).toMatch(new RegExp(`^ok .*first\\.json: HEMT baseline release 3 at 77 K, \\d+ values, \\d+ not derived \\(listed in the file\\), sha256 ${sha}\\n$`));
    expect((await evaluate([...args, "--out", second])).code).toBe(0);
    expect(readFileSync(second).equals(readFileSync(first))).toBe(true);
    const bytes = readFileSync(first, "utf8");
    expect(bytes.split("\n").slice(0, 5).join("\n")).toContain(`"sha256": "${sha}"`);
    expect(bytes).toBe((await api(`${EVALUATE}?temperature=77&material=AlGaAs&x=0.3&substrate=GaAs`)).text);

    const csv = path.join(dir, "first.csv");
    expect((await evaluate([...args, "--format", "csv", "--out", csv])).code).toBe(0);
    expect(readFileSync(csv, "utf8").split("\r\n").slice(0, 2)).toEqual(['# schema: "bandledger.evaluation"', `# release_sha256: "${sha}"`]);

    await demo.restart();
    const after = path.join(dir, "after-restart.json");
    expect((await evaluate([...args, "--out", after])).code).toBe(0);
    expect(readFileSync(after).equals(readFileSync(first))).toBe(true);
    const afterCsv = path.join(dir, "after-restart.csv");
    expect((await evaluate([...args, "--format", "csv", "--out", afterCsv])).code).toBe(0);
    expect(readFileSync(afterCsv).equals(readFileSync(csv))).toBe(true);
  });

  it("exits 3 and writes nothing when the release arrives changed", async () => {
    tamper = true;
    try {
      const out = path.join(dir, "tampered.json");
      const run = await evaluate([...args, "--out", out], proxyUrl);
      expect(run.code).toBe(3);
      expect(run.stderr).toMatch(/^bandledger evaluate: hash mismatch, nothing written: .+\n$/);
      expect(existsSync(out)).toBe(false);
      expect(readdirSync(dir).filter((f) => f.endsWith(".part"))).toEqual([]);
    } finally {
      tamper = false;
    }
    expect((await evaluate([...args, "--out", path.join(dir, "via-proxy.json")], proxyUrl)).code).toBe(0);
  });

  it("exits 2 with one line for a missing or wrong argument, also one the release refuses", async () => {
    const out = path.join(dir, "never.json");
    const runs = await Promise.all([
      ["hemt-baseline", "3", "--out", out],
      ["hemt-baseline", "--temperature", "77", "--out", out],
      ["hemt-baseline", "3", "--temperature", "-1", "--out", out],
      ["hemt-baseline", "3", "--temperature", "77", "--x", "2", "--out", out],
      ["hemt-baseline", "3", "--temperature", "77", "--out", out, "--format", "xml"],
      ["hemt-baseline", "3", "--temperature", "77", "--material", "InP", "--out", out],
      ["hemt-baseline", "3", "--temperature", "77", "--material", "AlGaAs", "--out", out],
      ["hemt-baseline", "3", "--temperature", "77", "--colour", "blue", "--out", out],
    ].map(async (bad) => [bad, await evaluate(bad)] as const));
    for (const [bad, run] of runs) {
      expect(run.code, bad.join(" ")).toBe(2);
      expect(run.stderr.trim().split("\n"), run.stderr).toHaveLength(1);
    }
    expect((await evaluate(["hemt-baseline", "3", "--temperature", "77", "--material", "AlGaAs", "--out", out])).stderr).toMatch(/--x: AlGaAs is an alloy/);
    expect(existsSync(out)).toBe(false);
  });
});
