import { type RouteConfig, index, route } from "@react-router/dev/routes";

// One section per area; keep each area's routes together.
export default [
  index("routes/home.tsx"),
  route("healthz", "routes/healthz.ts"),

  // sign-in, account, admin

  // registry

  // proposals and review

  // physics checks

  // sets, downloads, API

  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
