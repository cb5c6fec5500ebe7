import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

export default [
  route("signin", "routes/signin.tsx"),
  route("signout", "routes/signout.tsx"),
  ...prefix("api", [
    route("me", "routes/api/me.ts"),
    route("health", "routes/api/health.ts"),
    route("jobs", "routes/api/jobs.ts"),
    route("*", "routes/api/not-found.ts"),
  ]),
  layout("routes/_app.tsx", [
    index("routes/overview.tsx"),
    route("account", "routes/account.tsx"),
    route("admin/users", "routes/admin.users.tsx"),
    route("admin/tokens", "routes/admin.tokens.tsx"),
    route("*", "routes/not-found.tsx"),
  ]),
] satisfies RouteConfig;
