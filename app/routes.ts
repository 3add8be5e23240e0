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
  route("api/v1/account", "routes/api.v1.account.ts"),
  route("api/v1/whoami", "routes/api.v1.whoami.ts"),

  // registry
  route("registry", "routes/registry.tsx"),
  route("materials", "routes/materials.tsx"),
  route("materials/:key", "routes/materials.$key.tsx"),
  route("records/:id", "routes/records.$id.tsx"),
  route("sources", "routes/sources.tsx"),
  route("sources/:id", "routes/sources.$id.tsx"),

  // proposals and review
  route("proposals", "routes/proposals.tsx"),
  route("proposals/new", "routes/proposals.new.tsx"),
  route("proposals/restore", "routes/proposals.restore.ts"),
  route("proposals/:id", "routes/proposals.$id.tsx"),
  route("proposals/:id/edit", "routes/proposals.$id.edit.tsx"),
  route("proposals/:id/attachments/:attachmentId", "routes/proposals.$id.attachments.$attachmentId.ts"),
  route("review", "routes/review.tsx"),
  route("uploads", "routes/uploads.tsx"),
  route("uploads/template.csv", "routes/uploads.template.ts"),
  route("uploads/:id", "routes/uploads.$id.tsx"),
  route("uploads/:id/file", "routes/uploads.$id.file.ts"),

  // physics checks
  route("checks/nfe", "routes/checks.nfe.tsx"),
  route("checks/epm", "routes/checks.epm.tsx"),
  route("checks/report", "routes/checks.report.ts"),
  route("admin/tolerances", "routes/admin.tolerances.tsx"),

  // sets, downloads, API
  route("sets", "routes/sets.tsx"),
  route("sets/new", "routes/sets.new.tsx"),
  route("sets/:slug", "routes/sets.detail.tsx"),
  route("sets/:slug/compare", "routes/sets.compare.tsx"),
  route("sets/:slug/releases/:number", "routes/sets.release.tsx"),
  route("sets/:slug/releases/:number.json", "routes/releases.json.ts"),
  route("sets/:slug/releases/:number.csv", "routes/releases.csv.ts"),
  route("api-docs", "routes/api-docs.tsx"),
  route("api/v1/openapi.json", "routes/api.v1.openapi.ts"),
  route("api/v1/materials", "routes/api.v1.materials.ts"),
  route("api/v1/quantities", "routes/api.v1.quantities.ts"),
  route("api/v1/records", "routes/api.v1.records.ts"),
  route("api/v1/records/:id/history", "routes/api.v1.records.history.ts"),
  route("api/v1/sets", "routes/api.v1.sets.ts"),
  route("api/v1/sets/:slug", "routes/api.v1.set.ts"),
  route("api/v1/sets/:slug/releases", "routes/api.v1.set-releases.ts"),
  route("api/v1/sets/:slug/releases/:number", "routes/api.v1.release.ts"),
  route("api/v1/sets/:slug/releases/:number/download", "routes/api.v1.release-download.ts"),
  route("api/v1/sets/:slug/releases/:number/evaluate", "routes/api.v1.release-evaluate.ts"),
  route("api/v1/sets/:slug/compare", "routes/api.v1.set-compare.ts"),
  route("api/v1/checks/nfe", "routes/api.v1.checks.nfe.ts"),
  route("api/v1/checks/epm", "routes/api.v1.checks.epm.ts"),
  route("api/v1/*", "routes/api.v1.not-found.ts"),

  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
