import { type RouteConfig, index, route } from "@react-router/dev/routes";

// One section per area; keep each area's routes together.
export default [
  index("routes/home.tsx"),
  route("healthz", "routes/healthz.ts"),

  // sign-in, account, admin
  route("sign-in", "routes/sign-in.tsx"),
  route("sign-in/code", "routes/sign-in.code.tsx"),
  route("auth/magic-link", "routes/auth.magic-link.ts"),
  route("sign-out", "routes/sign-out.ts"),
  route("account", "routes/account.tsx"),
  route("admin", "routes/admin.tsx", [
    index("routes/admin._index.tsx"),
    route("users", "routes/admin.users.tsx"),
    route("families", "routes/admin.families.tsx"),
    route("leads", "routes/admin.leads.tsx"),
    route("audit", "routes/admin.audit.tsx"),
  ]),
  route("dev/mailbox", "routes/dev.mailbox.tsx"),
  route("dev/mailbox/:file", "routes/dev.mailbox.$file.tsx"),
  route("api/v1/whoami", "routes/api.v1.whoami.ts"),

  // registry

  // proposals and review

  // physics checks

  // sets, downloads, API

  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
