import { execFileSync } from "node:child_process";
import { afterEach, describe, expect, it, vi } from "vitest";

// env() reads process.env once; each case loads a fresh copy of the module under the variables it sets.
const saved = { ...process.env };
afterEach(() => {
  process.env = { ...saved };
  vi.resetModules();
});

async function envWith(vars: Record<string, string | undefined>) {
  for (const [k, v] of Object.entries(vars)) {
    if (v === undefined) delete process.env[k];
    else process.env[k] = v;
  }
  process.env.SESSION_SECRET = "env-test-session-secret-0123456789abcdef";
  process.env.DATABASE_URL = "mysql://u:p@127.0.0.1:1/x";
  vi.resetModules();
  const { env } = await import("./env");
  return env;
}

describe("the local mailbox setting", () => {
  it("is off under production unless switched on, and on only in a development server by default", async () => {
    expect((await envWith({ NODE_ENV: "production", BANDLEDGER_MAILBOX: undefined }))().mailboxEnabled).toBe(false);
    expect((await envWith({ NODE_ENV: undefined, BANDLEDGER_MAILBOX: undefined }))().mailboxEnabled).toBe(false);
    expect((await envWith({ NODE_ENV: "development", BANDLEDGER_MAILBOX: undefined }))().mailboxEnabled).toBe(true);
    expect((await envWith({ NODE_ENV: "production", BANDLEDGER_MAILBOX: "on" }))().mailboxEnabled).toBe(true);
  });

  it("is refused with an https public address, and stays off there by default", async () => {
    const on = await envWith({ NODE_ENV: "production", BANDLEDGER_MAILBOX: "on", BANDLEDGER_PUBLIC_URL: "https://ledger.example.test" });
    expect(() => on()).toThrow(/BANDLEDGER_MAILBOX: the local mailbox shows every sign-in code, so it is refused with an https public address/);
    expect((await envWith({ NODE_ENV: "development", BANDLEDGER_MAILBOX: undefined, BANDLEDGER_PUBLIC_URL: "https://ledger.example.test" }))().mailboxEnabled).toBe(false);
  });
});

describe("TRUST_PROXY", () => {
  it("takes addresses and ranges, and refuses the old 1 (which believed anyone) or garbage with the variable named", async () => {
    expect((await envWith({ TRUST_PROXY: "127.0.0.1, 10.0.0.0/8, ::1" }))().TRUST_PROXY).toBe("127.0.0.1, 10.0.0.0/8, ::1");
    expect((await envWith({ TRUST_PROXY: "0" }))().TRUST_PROXY).toBe("");
    expect(await envWith({ TRUST_PROXY: "1" }).then((e) => () => e())).toThrow(/TRUST_PROXY: TRUST_PROXY lists the proxies' addresses now/);
    expect(await envWith({ TRUST_PROXY: "10.0.0.0/40" }).then((e) => () => e())).toThrow(/TRUST_PROXY must be IP addresses or CIDR ranges/);
  });
});

describe("npm start's mailbox default (scripts/mailbox-default.sh)", () => {
  const decide = (vars: Record<string, string>) =>
    execFileSync("bash", ["-c", '. scripts/mailbox-default.sh; echo "$BANDLEDGER_MAILBOX"'], { env: { PATH: process.env.PATH, ...vars }, encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] }).trim();

  it("switches the mailbox on for loopback only, off with a real mail server, and keeps an explicit choice", () => {
    expect(decide({ HOST: "127.0.0.1" })).toBe("on");
    expect(decide({ HOST: "::1" })).toBe("on");
    expect(decide({ HOST: "0.0.0.0" })).toBe("off");
    expect(decide({ HOST: "192.0.2.10" })).toBe("off");
    expect(decide({ HOST: "127.0.0.1", SMTP_URL: "smtp://mail.example.test:587" })).toBe("off");
    expect(decide({ HOST: "0.0.0.0", BANDLEDGER_MAILBOX: "on" })).toBe("on");
  });

  it("warns when the mailbox is switched on for a host others can reach", () => {
    const out = execFileSync("bash", ["-c", ". scripts/mailbox-default.sh 2>&1"], { env: { PATH: process.env.PATH, HOST: "0.0.0.0", BANDLEDGER_MAILBOX: "on" }, encoding: "utf8" });
    expect(out).toMatch(/warning: BANDLEDGER_MAILBOX=on while the app listens on 0\.0\.0\.0/);
  });
});
