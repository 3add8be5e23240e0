// @ts-check
import compression from "compression";

/**
 * What is compressed on the fly: textual answers (HTML, JSON, CSS, JS) of at least 1 kB, as react-router-serve did.
 * Never an attachment: uploaded files go out as they were stored, and frozen releases carry their own gzip and
 * brotli forms, made once (app/.server/sets/release-cache.ts), with Content-Encoding already set.
 * @param {import("node:http").IncomingMessage} req
 * @param {import("node:http").ServerResponse} res
 */
export function compressOnTheFly(req, res) {
  const disposition = res.getHeader("Content-Disposition");
  if (typeof disposition === "string" && /^\s*attachment\b/i.test(disposition)) return false;
  return compression.filter(/** @type {any} */ (req), /** @type {any} */ (res));
}

/** The compression middleware (brotli quality 4 or gzip level 6, from 1 kB) with the rule above. */
export function compressAnswers() {
  return compression({ filter: compressOnTheFly });
}
