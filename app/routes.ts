import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// Every page and resource route. Each area's layout draws its navigation; every
// loader and action still checks the role itself (a layout does not guard children).
// tests/access enumerates this config: a new route needs an access rule there.
export default [
  layout("routes/public/layout.tsx", [
    index("routes/public/landing.tsx"),
    route("sign-in", "routes/public/sign-in.tsx"),
    route("sign-up", "routes/public/sign-up.tsx"),
  ]),
  route("sign-out", "routes/public/sign-out.tsx"),

  ...prefix("portal", [
    layout("routes/portal/layout.tsx", [
      index("routes/portal/home.tsx"),
      route("yards/:yardId", "routes/portal/yard.tsx"),
    ]),
  ]),

  ...prefix("dispatch", [
    layout("routes/dispatch/layout.tsx", [
      index("routes/dispatch/home.tsx"),
      route("yards/:yardId", "routes/dispatch/yard.tsx"),
      route("settings", "routes/dispatch/settings.tsx"),
    ]),
  ]),

  ...prefix("crew", [layout("routes/crew/layout.tsx", [index("routes/crew/home.tsx")])]),

  ...prefix("office", [layout("routes/office/layout.tsx", [index("routes/office/home.tsx")])]),

  route("healthz", "routes/api/healthz.ts"),
  route("*", "routes/public/not-found.tsx"),
] satisfies RouteConfig;
