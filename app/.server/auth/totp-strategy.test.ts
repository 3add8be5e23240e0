import { afterEach, describe, expect, it, vi } from "vitest";
import { CODE_PERIOD_SECONDS, createTotpStrategy, redirectOf, SIGN_IN_PATHS } from "./totp-strategy";
import { readTotpCookie, totpCookieFromResponse } from "./totp-cookie";

const SECRET = "0f".repeat(32);
const ORIGIN = "http://bandledger.test";

// Drives the real remix-auth-totp strategy with our settings; sendCode and verify only record what they receive.
function harness() {
  const sent: { email: string; code: string; magicLink: string }[] = [];
  const verified: string[] = [];
  const strategy = createTotpStrategy<never>({
    secret: SECRET,
    secureCookie: false,
    sendCode: async ({ email, code, magicLink }) => {
      sent.push({ email, code, magicLink });
    },
    verify: async ({ email }) => {
      verified.push(email);
      throw new Response(null, { status: 302, headers: { Location: "/signed-in" } });
    },
  });
  let cookie = "";
  const keep = (r: Response) => {
    const c = r.headers.getSetCookie().find((s) => s.startsWith("_totp="));
    if (c) cookie = c.split(";")[0];
    return r;
  };
  const post = async (fields: Record<string, string>) =>
    keep(await redirectOf(() => strategy.authenticate(new Request(ORIGIN + SIGN_IN_PATHS.code, {
      method: "POST", headers: { cookie, "content-type": "application/x-www-form-urlencoded" }, body: new URLSearchParams(fields),
    }))));
  const get = async (url: string) => keep(await redirectOf(() => strategy.authenticate(new Request(url, { headers: { cookie } }))));
  return { sent, verified, post, get, cookie: () => cookie };
}

afterEach(() => {
  vi.useRealTimers();
});

describe("sign-in code settings (remix-auth-totp 4 with our options)", () => {
  it("mails six decimal digits and keeps the code record in a cookie that lives exactly as long as the code", async () => {
    const h = harness();
    const r = await h.post({ email: "ravi@example.test" });
    expect(r.headers.get("Location")).toBe(SIGN_IN_PATHS.code);
    expect(h.sent[0].code).toMatch(/^\d{6}$/);
    const setCookie = r.headers.getSetCookie().find((c) => c.startsWith("_totp="))!;
    expect(setCookie).toMatch(/Max-Age=600(;|$)/);
    expect(setCookie).toMatch(/HttpOnly/);
    expect(setCookie).toMatch(/SameSite=Lax/);
    expect(readTotpCookie(h.cookie())?.email).toBe("ravi@example.test");
    expect(new URL(h.sent[0].magicLink).pathname).toBe(SIGN_IN_PATHS.magicLink);
  });

  it("accepts the code 599 s after it was issued", async () => {
    const start = Date.now();
    vi.useFakeTimers({ toFake: ["Date"], now: start });
    const h = harness();
    await h.post({ email: "ravi@example.test" });
    vi.setSystemTime(start + (CODE_PERIOD_SECONDS - 1) * 1000);
    const r = await h.post({ code: h.sent[0].code });
    expect(r.headers.get("Location")).toBe("/signed-in");
    expect(h.verified).toEqual(["ravi@example.test"]);
  });

  it("refuses the right code 601 s after it was issued, as expired", async () => {
    const start = Date.now();
    vi.useFakeTimers({ toFake: ["Date"], now: start });
    const h = harness();
    await h.post({ email: "ravi@example.test" });
    vi.setSystemTime(start + (CODE_PERIOD_SECONDS + 1) * 1000);
    const r = await h.post({ code: h.sent[0].code });
    expect(r.headers.get("Location")).toBe(SIGN_IN_PATHS.code);
    expect(totpCookieFromResponse(r)?.error).toBe("code-expired");
    expect(h.verified).toEqual([]);
  });

  it("refuses the magic link 601 s after it was issued, as expired", async () => {
    const start = Date.now();
    vi.useFakeTimers({ toFake: ["Date"], now: start });
    const h = harness();
    await h.post({ email: "ravi@example.test" });
    vi.setSystemTime(start + (CODE_PERIOD_SECONDS + 1) * 1000);
    const r = await h.get(h.sent[0].magicLink);
    expect(totpCookieFromResponse(r)?.error).toBe("code-expired");
    expect(h.verified).toEqual([]);
  });

  it("refuses a wrong code with our key, and leaves counting wrong tries to us (the library does not count them)", async () => {
    const h = harness();
    await h.post({ email: "ravi@example.test" });
    const wrong = String((Number(h.sent[0].code) + 1) % 1_000_000).padStart(6, "0");
    for (let i = 0; i < 4; i++) {
      const r = await h.post({ code: wrong });
      expect(totpCookieFromResponse(r)?.error).toBe("code-wrong");
    }
    // Still accepted after four wrong tries: the three-try limit lives in our sign-in service (rate_counters).
    expect((await h.post({ code: h.sent[0].code })).headers.get("Location")).toBe("/signed-in");
  });
});
