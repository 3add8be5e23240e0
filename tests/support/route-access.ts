import { sessionCookieValue } from "./session";

// Who may call each route: authz-matrix.test.ts fails for a route of app/routes.ts without an entry (see DEVELOPERS.md).
export type Access =
  | "public" // everyone, signed in or not
  | "signed-in" // any active user; others are sent to /sign-in?returnTo=…
  | "role:reader" | "role:contributor" | "role:lead" | "role:admin" // that role or a higher one; lower roles get 403
  | "api-user" // a bearer token or a session; others get 401 JSON
  | "dev-only" // open while the local mailbox is on, 404 when it is off
  | "not-found"; // the catch-all: 404 for everyone

export type Fixtures = { mailFile: string };

export type RouteRequest = { method: "GET" | "POST"; path: string | ((f: Fixtures) => string); form?: Record<string, string> };

export type RouteAccess = { access: Access; requests: RouteRequest[] };

export const ROUTE_ACCESS: Record<string, RouteAccess> = {
  "routes/home": { access: "public", requests: [{ method: "GET", path: "/" }] },
  "routes/healthz": { access: "public", requests: [{ method: "GET", path: "/healthz" }] },
  "routes/not-found": { access: "not-found", requests: [{ method: "GET", path: "/no/such/page" }] },

  "routes/sign-in": { access: "public", requests: [{ method: "GET", path: "/sign-in" }, { method: "POST", path: "/sign-in", form: { email: "" } }] },
  "routes/sign-in.code": { access: "public", requests: [{ method: "GET", path: "/sign-in/code" }, { method: "POST", path: "/sign-in/code", form: { intent: "verify", code: "" } }] },
  "routes/auth.magic-link": { access: "public", requests: [{ method: "GET", path: "/auth/magic-link?t=not-a-token" }] },
  "routes/sign-out": { access: "public", requests: [{ method: "GET", path: "/sign-out" }, { method: "POST", path: "/sign-out", form: {} }] },
  "routes/account": { access: "signed-in", requests: [{ method: "GET", path: "/account" }, { method: "POST", path: "/account", form: { intent: "profile", name: "" } }] },
  "routes/admin": { access: "role:admin", requests: [{ method: "GET", path: "/admin" }] },
  "routes/admin._index": { access: "role:admin", requests: [{ method: "GET", path: "/admin" }] },
  "routes/admin.users": { access: "role:admin", requests: [{ method: "GET", path: "/admin/users" }, { method: "POST", path: "/admin/users", form: { intent: "invite", email: "" } }] },
  "routes/admin.families": { access: "role:admin", requests: [{ method: "GET", path: "/admin/families" }, { method: "POST", path: "/admin/families", form: { intent: "create", key: "" } }] },
  "routes/admin.leads": { access: "role:admin", requests: [{ method: "GET", path: "/admin/leads" }, { method: "POST", path: "/admin/leads", form: { intent: "assign" } }] },
  "routes/admin.audit": { access: "role:admin", requests: [{ method: "GET", path: "/admin/audit?action=auth.sign_in" }] },
  "routes/dev.mailbox": { access: "dev-only", requests: [{ method: "GET", path: "/dev/mailbox" }] },
  "routes/dev.mailbox.$file": { access: "dev-only", requests: [{ method: "GET", path: (f) => `/dev/mailbox/${f.mailFile}` }] },
  "routes/api.v1.whoami": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/whoami" }] },




};

export type Caller = "anonymous" | "reader" | "contributor" | "lead" | "admin" | "deactivated";
export const CALLERS: Caller[] = ["anonymous", "reader", "contributor", "lead", "admin", "deactivated"];

export type Outcome = "allow" | "sign-in" | "forbidden" | "unauthorized" | "not-found";

const RANK = { reader: 0, contributor: 1, lead: 2, admin: 3 } as const;

export function expectedOutcome(access: Access, caller: Caller, options: { mailbox: boolean }): Outcome {
  const signedIn = caller !== "anonymous" && caller !== "deactivated";
  switch (access) {
    case "public":
      return "allow";
    case "not-found":
      return "not-found";
    case "dev-only":
      return options.mailbox ? "allow" : "not-found";
    case "signed-in":
      return signedIn ? "allow" : "sign-in";
    case "api-user":
      return signedIn ? "allow" : "unauthorized";
    default: {
      if (!signedIn) return "sign-in";
      const needed = access.slice("role:".length) as keyof typeof RANK;
      return RANK[caller as keyof typeof RANK] >= RANK[needed] ? "allow" : "forbidden";
    }
  }
}

// What a response means for access: a bad form (400) or a redirect elsewhere still means the guard let the caller in.
export function outcomeOf(response: Response): Outcome | "error" {
  const location = response.headers.get("location") ?? "";
  if (response.status >= 300 && response.status < 400 && location.startsWith("/sign-in?returnTo=")) return "sign-in";
  if (response.status === 401) return "unauthorized";
  if (response.status === 403) return "forbidden";
  if (response.status === 404) return "not-found";
  if (response.status >= 500) return "error";
  return "allow";
}

// A fetch with a cookie jar and no automatic redirects, so tests see each step of a sign-in.
export class HttpClient {
  readonly cookies = new Map<string, string>();
  constructor(readonly base: string, readonly headers: Record<string, string> = {}) {}

  static async signedIn(base: string, userId: number, headers: Record<string, string> = {}): Promise<HttpClient> {
    const c = new HttpClient(base, headers);
    c.cookies.set("__bandledger", await sessionCookieValue(userId));
    return c;
  }

  cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }

  async request(path: string, init: { method?: string; form?: Record<string, string>; headers?: Record<string, string>; origin?: string | null } = {}): Promise<Response> {
    const method = init.method ?? (init.form ? "POST" : "GET");
    const headers: Record<string, string> = { ...this.headers, ...init.headers };
    if (this.cookies.size) headers.cookie = this.cookieHeader();
    if (method !== "GET") {
      const origin = init.origin === undefined ? this.base : init.origin;
      if (origin !== null) headers.origin = origin;
    }
    let body: URLSearchParams | undefined;
    if (init.form) {
      body = new URLSearchParams(init.form);
      headers["content-type"] = "application/x-www-form-urlencoded";
    }
    const response = await fetch(new URL(path, this.base), { method, headers, body, redirect: "manual" });
    for (const line of response.headers.getSetCookie()) {
      const [pair, ...attrs] = line.split(";");
      const i = pair.indexOf("=");
      const name = pair.slice(0, i).trim();
      const value = pair.slice(i + 1).trim();
      const gone = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a) || (/^\s*expires=/i.test(a) && Date.parse(a.split("=")[1]) < Date.now()));
      if (gone || value === "") this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return response;
  }

  get(path: string, headers?: Record<string, string>) {
    return this.request(path, { headers });
  }

  post(path: string, form: Record<string, string>, options: { origin?: string | null; headers?: Record<string, string> } = {}) {
    return this.request(path, { method: "POST", form, ...options });
  }
}
