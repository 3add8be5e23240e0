import { randomBytes } from "node:crypto";

export function createNonce(): string {
  return randomBytes(16).toString("base64");
}

export function contentSecurityPolicy(nonce: string, production: boolean): string {
  const script = production ? `'self' 'nonce-${nonce}'` : `'self' 'nonce-${nonce}' 'unsafe-inline' 'unsafe-eval'`;
  return [
    "default-src 'self'",
    `script-src ${script}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data:",
    "font-src 'self'",
    production ? "connect-src 'self'" : "connect-src 'self' ws: wss:",
    "frame-src 'self'",
    "frame-ancestors 'none'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
  ].join("; ");
}

// The usual headers for every response we render or serve from a resource route.
export function applySecurityHeaders(headers: Headers, nonce?: string): Headers {
  const production = process.env.NODE_ENV === "production";
  if (nonce) headers.set("Content-Security-Policy", contentSecurityPolicy(nonce, production));
  headers.set("X-Content-Type-Options", "nosniff");
  headers.set("X-Frame-Options", "DENY");
  headers.set("Referrer-Policy", "same-origin");
  headers.set("Permissions-Policy", "camera=(), microphone=(), geolocation=(), payment=()");
  headers.set("Cross-Origin-Opener-Policy", "same-origin");
  if ((process.env.BANDLEDGER_PUBLIC_URL ?? "").startsWith("https://")) {
    headers.set("Strict-Transport-Security", "max-age=31536000; includeSubDomains");
  }
  return headers;
}

// What a response that is not our rendered HTML may do in a browser: nothing (API JSON, downloads, health).
const NOTHING_RUNS = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";

/**
 * Root middleware: resource routes (the API, downloads, /healthz) bypass entry.server, so without this their
 * answers carried none of the headers above. Rendered pages already have them, with their nonce; they keep it.
 */
export async function withSecurityHeaders(next: () => Promise<Response>): Promise<Response> {
  const response = await next();
  try {
    if (!response.headers.has("Content-Security-Policy")) response.headers.set("Content-Security-Policy", NOTHING_RUNS);
    applySecurityHeaders(response.headers);
  } catch {
    // A response with immutable headers (one fetched from elsewhere) is passed on as it is.
  }
  return response;
}
