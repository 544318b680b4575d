import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

export default [
  index("routes/home.tsx"),
  route("login", "routes/login.tsx"),
  route("logout", "routes/logout.tsx"),
  route("forgot-password", "routes/forgot-password.tsx"),
  route("reset-password/:token", "routes/reset-password.tsx"),
  route("invite/:token", "routes/invite.tsx"),
  route("healthz", "routes/healthz.ts"),
  route("sites/:siteId/fly-list/brief", "routes/site-fly-list.brief.tsx"),
  route("sites/:siteId/recovery.csv", "routes/site-recovery-csv.ts"),
  route("sites/:siteId/recovery/report", "routes/site-recovery-report.tsx"),

  layout("routes/app-layout.tsx", [
    route("portfolio", "routes/portfolio.tsx"),
    route("sites/new", "routes/site-new.tsx"),
    ...prefix("sites/:siteId", [
      index("routes/site-overview.tsx"),
      route("layout", "routes/site-layout.tsx"),
      route("data", "routes/site-data.tsx"),
      route("flags", "routes/site-flags.tsx"),
      route("fly-list", "routes/site-fly-list.tsx"),
      route("flights", "routes/site-flights.tsx"),
      route("flights/:flightId", "routes/site-flight.tsx"),
      route("work-orders", "routes/site-work-orders.tsx"),
      route("work-orders/new", "routes/site-work-order-new.tsx"),
      route("work-orders/:workOrderId", "routes/site-work-order.tsx"),
      route("inspections", "routes/site-inspections.tsx"),
      route("recovery", "routes/site-recovery.tsx"),
      route("settings", "routes/site-settings.tsx"),
    ]),
    ...prefix("settings", [
      index("routes/settings-users.tsx"),
      route("tokens", "routes/settings-tokens.tsx"),
      route("outbox", "routes/settings-outbox.tsx"),
      route("inspection", "routes/settings-inspection.tsx"),
      route("notifications", "routes/settings-notifications.tsx"),
      route("audit", "routes/settings-audit.tsx"),
    ]),
  ]),

  ...prefix("api/v1", [
    route("me", "routes/api.me.ts"),
    route("sites", "routes/api.sites.ts"),
    route("sites/:siteId/layout", "routes/api.sites.layout.ts"),
    route("sites/:siteId/findings", "routes/api.sites.findings.ts"),
    route("sites/:siteId/fly-list", "routes/api.sites.fly-list.ts"),
  ]),
] satisfies RouteConfig;
