const NO_RETURN = [/^\/sign-in(\/|$|\?)/, /^\/sign-out(\/|$|\?)/, /^\/auth\//];

// Only a path of this site, never another origin ("//host", "/\host") and never back into the sign-in pages.
export function safeReturnTo(value: unknown, fallback = "/"): string {
  if (typeof value !== "string" || value.length === 0 || value.length > 1000) return fallback;
  if (!value.startsWith("/") || value.startsWith("//") || value.includes("\\") || /[\u0000-\u001f\u007f]/.test(value)) return fallback;
  let url: URL;
  try {
    url = new URL(value, "http://bandledger.invalid");
  } catch {
    return fallback;
  }
  if (url.origin !== "http://bandledger.invalid") return fallback;
  const path = url.pathname + url.search + url.hash;
  if (NO_RETURN.some((re) => re.test(path))) return fallback;
  return path;
}

// React Router's data requests carry ".data" and "_routes"/"index" details; the page address is without them.
export function pageAddress(requestUrl: string): string {
  const url = new URL(requestUrl);
  let pathname = url.pathname;
  if (pathname.endsWith("/_.data")) pathname = pathname.slice(0, -"_.data".length);
  else if (pathname.endsWith(".data")) pathname = pathname.slice(0, -".data".length);
  url.searchParams.delete("_routes");
  url.searchParams.delete("index");
  const search = url.searchParams.toString();
  return pathname + (search ? `?${search}` : "");
}
