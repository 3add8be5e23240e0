import { existsSync, readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { TEST_SESSION_SECRET } from "../support/session";

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = path.join(dir, name);
    return statSync(p).isDirectory() ? filesUnder(p) : [p];
  });
}

// npm test builds before it runs the tests; the browser gets only build/client.
describe("the client bundle", () => {
  const dir = "build/client";
  const files = existsSync(dir) ? filesUnder(dir).filter((f) => /\.(js|css|html|map|json)$/.test(f)) : [];
  const text = files.map((f) => readFileSync(f, "utf8")).join("\n");

  it("exists", () => {
    expect(files.some((f) => f.endsWith(".js"))).toBe(true);
  });

  it("carries no secret of the server", () => {
    const secrets = [TEST_SESSION_SECRET];
    for (const file of [".data/session-secret", ".data/db-password"]) {
      if (existsSync(file)) secrets.push(readFileSync(file, "utf8").trim());
    }
    for (const s of secrets) expect(text.includes(s)).toBe(false);
    expect(text).not.toMatch(/mysql:\/\/[^"'\s]*:[^"'\s]*@/);
    expect(text).not.toMatch(/BEGIN (RSA |EC )?PRIVATE KEY/);
  });

  it("contains no server-only module", () => {
    // Markers of code that must stay on the server: the database driver, the mailer, the env reader.
    for (const marker of ["createPool(", "mysql2", "nodemailer", "SESSION_SECRET", "db-password", "smtp-server"]) {
      expect(text.includes(marker), marker).toBe(false);
    }
  });
});
