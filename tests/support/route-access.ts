import { sessionCookieFor } from "./session";

// Who may call each route: authz-matrix.test.ts fails for a route of app/routes.ts without an entry (see DEVELOPERS.md).
export type Access =
  | "public" // everyone, signed in or not
  | "signed-in" // any active user; others are sent to /sign-in?returnTo=…
  | "role:reader" | "role:contributor" | "role:lead" | "role:admin" // that role or a higher one; lower roles get 403
  | "api-user" // a bearer token or a session; others get 401 JSON
  | "dev-only" // open to this machine while the local mailbox is on (403 to another machine), 404 when it is off
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
  "routes/api.v1.account": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/account" }] },
  "routes/api.v1.whoami": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/whoami" }] },

  "routes/registry": { access: "role:reader", requests: [{ method: "GET", path: "/registry?family=arsenides&quantity=eg&sort=value&dir=desc" }] },
  "routes/materials": { access: "role:reader", requests: [{ method: "GET", path: "/materials" }] },
  "routes/materials.$key": { access: "role:reader", requests: [{ method: "GET", path: "/materials/GaAs" }] },
  "routes/records.$id": { access: "role:reader", requests: [{ method: "GET", path: "/records/1" }] },
  "routes/sources": { access: "role:reader", requests: [{ method: "GET", path: "/sources" }] },
  "routes/sources.$id": { access: "role:reader", requests: [{ method: "GET", path: "/sources/1" }] },

  "routes/sets": { access: "signed-in", requests: [{ method: "GET", path: "/sets" }] },
  "routes/sets.new": { access: "role:contributor", requests: [{ method: "GET", path: "/sets/new" }, { method: "POST", path: "/sets/new", form: { name: "" } }] },
  "routes/sets.detail": { access: "signed-in", requests: [{ method: "GET", path: "/sets/hemt-baseline" }, { method: "POST", path: "/sets/hemt-baseline", form: { intent: "notices-off" } }] },
  "routes/sets.compare": { access: "signed-in", requests: [{ method: "GET", path: "/sets/hemt-baseline/compare?from=2&to=3" }] },
  "routes/sets.release": { access: "signed-in", requests: [{ method: "GET", path: "/sets/hemt-baseline/releases/3" }, { method: "GET", path: "/sets/hemt-baseline/releases/3?temperature=77&material=AlGaAs&x=0.3" }] },
  "routes/releases.json": { access: "signed-in", requests: [{ method: "GET", path: "/sets/hemt-baseline/releases/3.json" }] },
  "routes/releases.csv": { access: "signed-in", requests: [{ method: "GET", path: "/sets/hemt-baseline/releases/3.csv" }] },
  "routes/api-docs": { access: "signed-in", requests: [{ method: "GET", path: "/api-docs" }] },
  "routes/api.v1.openapi": { access: "public", requests: [{ method: "GET", path: "/api/v1/openapi.json" }] },
  "routes/api.v1.materials": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/materials" }] },
  "routes/api.v1.quantities": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/quantities" }] },
  "routes/api.v1.records": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/records?limit=5" }] },
  "routes/api.v1.records.history": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/records/1/history" }] },
  "routes/api.v1.sets": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets" }] },
  "routes/api.v1.set": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline" }] },
  "routes/api.v1.set-releases": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline/releases" }] },
  "routes/api.v1.release": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline/releases/3" }] },
  "routes/api.v1.release-download": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline/releases/3/download?format=csv" }] },
  "routes/api.v1.release-evaluate": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline/releases/3/evaluate?temperature=77" }] },
  "routes/api.v1.set-compare": { access: "api-user", requests: [{ method: "GET", path: "/api/v1/sets/hemt-baseline/compare?from=2&to=3" }] },
  "routes/api.v1.checks.nfe": { access: "api-user", requests: [{ method: "POST", path: "/api/v1/checks/nfe", form: {} }] },
  "routes/api.v1.checks.epm": { access: "api-user", requests: [{ method: "POST", path: "/api/v1/checks/epm", form: {} }] },
  "routes/api.v1.not-found": { access: "not-found", requests: [{ method: "GET", path: "/api/v1/no-such-endpoint" }] },

  "routes/checks.nfe": { access: "signed-in", requests: [{ method: "GET", path: "/checks/nfe?period=5.65325&unit=angstrom&n=1&u=0.1&stated=0.2" }] },
  "routes/checks.epm": { access: "signed-in", requests: [{ method: "GET", path: "/checks/epm?structure=diamond&lattice=5.43&s3=-0.21&s8=0.04&s11=0.08" }] },
  "routes/checks.report": { access: "signed-in", requests: [{ method: "GET", path: "/checks/report?kind=new_record&material=GaAs&quantity=me&valley=G&value=0.067&unit=m0" }, { method: "POST", path: "/checks/report", form: { kind: "new_record", material: "GaAs", quantity: "eg", temperatureK: "300", valley: "G", value: "1.4225", unit: "eV" } }] },
  "routes/admin.tolerances": { access: "role:admin", requests: [{ method: "GET", path: "/admin/tolerances" }, { method: "POST", path: "/admin/tolerances", form: { quantity: "eg", tolerance: "" } }] },

  "routes/proposals": { access: "role:contributor", requests: [{ method: "GET", path: "/proposals" }] },
  "routes/proposals.new": { access: "role:contributor", requests: [{ method: "GET", path: "/proposals/new" }, { method: "POST", path: "/proposals/new", form: { intent: "none" } }] },
  "routes/proposals.restore": { access: "role:contributor", requests: [{ method: "GET", path: "/proposals/restore" }] },
  "routes/proposals.$id": { access: "signed-in", requests: [{ method: "POST", path: "/proposals/1", form: { intent: "none" } }] },
  "routes/proposals.$id.edit": { access: "role:contributor", requests: [{ method: "POST", path: "/proposals/1/edit", form: { intent: "none" } }] },
  "routes/proposals.$id.attachments.$attachmentId": { access: "signed-in", requests: [{ method: "GET", path: "/proposals/1/attachments/none" }] },
  "routes/review": { access: "role:lead", requests: [{ method: "GET", path: "/review" }] },
  "routes/uploads": { access: "role:contributor", requests: [{ method: "GET", path: "/uploads" }, { method: "POST", path: "/uploads", form: { intent: "none" } }] },
  "routes/uploads.template": { access: "role:contributor", requests: [{ method: "GET", path: "/uploads/template.csv" }] },
  "routes/uploads.$id": { access: "role:contributor", requests: [{ method: "GET", path: "/uploads/none" }] },
  "routes/uploads.$id.file": { access: "role:contributor", requests: [{ method: "GET", path: "/uploads/none/file" }] },
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
    c.cookies.set("__bandledger", await sessionCookieFor(base, userId));
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
