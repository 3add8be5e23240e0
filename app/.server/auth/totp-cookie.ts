import { createHash } from "node:crypto";

// remix-auth-totp keeps its state in this cookie as URL-encoded fields; it is not signed, so we only read it.
export const TOTP_COOKIE = "_totp";

export type TotpCookie = { email?: string; jwe?: string; error?: string };

function parseValue(raw: string): TotpCookie {
  const unquoted = raw.startsWith('"') && raw.endsWith('"') ? raw.slice(1, -1).replace(/\\(.)/g, "$1") : raw;
  const params = new URLSearchParams(unquoted);
  const out: TotpCookie = {};
  const email = params.get("email");
  if (email) out.email = email;
  const error = params.get("error");
  if (error) out.error = error;
  const totp = params.get("totp");
  if (totp) {
    try {
      const parsed = JSON.parse(totp) as { jwe?: unknown };
      if (typeof parsed.jwe === "string") out.jwe = parsed.jwe;
    } catch {
      /* a damaged cookie counts as no code */
    }
  }
  return out;
}

export type TotpCookieValue = { raw: string; cookie: TotpCookie };

// Every _totp value in a Cookie header, in order: a browser holds one, so more than one is refused by the caller.
export function readTotpCookies(cookieHeader: string | null): TotpCookieValue[] {
  if (!cookieHeader) return [];
  const found: TotpCookieValue[] = [];
  for (const part of cookieHeader.split(";")) {
    const i = part.indexOf("=");
    if (i < 0) continue;
    if (part.slice(0, i).trim() !== TOTP_COOKIE) continue;
    const raw = part.slice(i + 1).trim();
    found.push({ raw, cookie: parseValue(raw) });
  }
  return found;
}

/** The one _totp cookie of a request; null when there is none or more than one. */
export function readTotpCookie(cookieHeader: string | null): TotpCookie | null {
  const all = readTotpCookies(cookieHeader);
  return all.length === 1 ? all[0].cookie : null;
}

/** The Cookie header with every _totp value replaced by exactly the one that was checked. */
export function withOnlyTotpCookie(cookieHeader: string | null, raw: string): string {
  const others = (cookieHeader ?? "")
    .split(";")
    .map((p) => p.trim())
    .filter((p) => p && p.slice(0, Math.max(0, p.indexOf("="))).trim() !== TOTP_COOKIE);
  return [...others, `${TOTP_COOKIE}=${raw}`].join("; ");
}

export function totpCookieFromResponse(response: Response): TotpCookie | null {
  const all = response.headers.getSetCookie().filter((c) => c.startsWith(`${TOTP_COOKIE}=`));
  const last = all.at(-1);
  if (!last) return null;
  return parseValue(last.slice(TOTP_COOKIE.length + 1).split(";")[0]);
}

// Names one issued code without revealing it: the encrypted code record, hashed.
export function codeDigest(jwe: string): string {
  return createHash("sha256").update(jwe).digest("hex");
}
