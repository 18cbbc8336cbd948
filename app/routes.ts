import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// Every page and resource route. Each area's layout draws its navigation; every
// loader and action still checks the role itself (a layout does not guard children).
// tests/access enumerates this config: a new route needs an access rule there.
export default [
  layout("routes/public/layout.tsx", [
    index("routes/public/landing.tsx"),
    route("sign-in", "routes/public/sign-in.tsx"),
    route("sign-up", "routes/public/sign-up.tsx"),
    route("sign-up/confirm/:token", "routes/public/sign-up-confirm.tsx"),
    route("pay/:token", "routes/public/pay.tsx"),
    route("forgot-password", "routes/public/forgot-password.tsx"),
    route("reset-password/:token", "routes/public/reset-password.tsx"),
    route("invite/:token", "routes/public/invite.tsx"),
    route("setup", "routes/public/setup.tsx"),
  ]),
  route("sign-out", "routes/public/sign-out.tsx"),
  route("profile", "routes/profile.tsx"),
  route("profile/email/:token", "routes/profile-email.tsx"),

  ...prefix("portal", [
    layout("routes/portal/layout.tsx", [
      index("routes/portal/home.tsx"),
      route("yards/new", "routes/portal/yard-new.tsx"),
      route("yards/:yardId", "routes/portal/yard.tsx"),
      route("yards/:yardId/edit", "routes/portal/yard-edit.tsx"),
      route("book", "routes/portal/book.tsx"),
      route("bookings", "routes/portal/bookings.tsx"),
      route("bookings/:visitId/change", "routes/portal/booking-change.tsx"),
      route("visits/:visitId", "routes/portal/visit-report.tsx"),
      route("invoices", "routes/portal/invoices.tsx"),
      route("invoices/:invoiceId", "routes/portal/invoice.tsx"),
      route("invoices/:invoiceId/pdf", "routes/portal/invoice-pdf.ts"),
      route("invoices/:invoiceId/receipt", "routes/portal/invoice-receipt.ts"),
      route("season", "routes/portal/season.tsx"),
      route("season/pdf", "routes/portal/season-pdf.ts"),
      route("account", "routes/portal/account.tsx"),
      route("account/export", "routes/portal/account-export.ts"),
    ]),
  ]),

  ...prefix("dispatch", [
    layout("routes/dispatch/layout.tsx", [
      index("routes/dispatch/home.tsx"),
      route("yards/:yardId", "routes/dispatch/yard.tsx"),
      route("yards/:yardId/edit", "routes/dispatch/yard-edit.tsx"),
      route("settings", "routes/dispatch/settings.tsx"),
      route("calendar", "routes/dispatch/calendar.tsx"),
      route("map", "routes/dispatch/map.tsx"),
      route("customers", "routes/dispatch/customers.tsx"),
      route("yards", "routes/dispatch/yards.tsx"),
      route("visits/:visitId", "routes/dispatch/visit.tsx"),
      route("days/:date", "routes/dispatch/day.tsx"),
      route("crews", "routes/dispatch/crews.tsx"),
      route("crews/new", "routes/dispatch/crew-new.tsx"),
      route("crews/:crewId", "routes/dispatch/crew-edit.tsx"),
    ]),
  ]),

  ...prefix("crew", [layout("routes/crew/layout.tsx", [index("routes/crew/home.tsx"), route("runs/:date", "routes/crew/run.tsx")])]),

  ...prefix("office", [
    layout("routes/office/layout.tsx", [
      index("routes/office/home.tsx"),
      route("customers", "routes/office/customers.tsx"),
      route("customers/import", "routes/office/customers-import.tsx"),
      route("invoices", "routes/office/invoices.tsx"),
      route("invoices/:invoiceId", "routes/office/invoice.tsx"),
      route("invoices/:invoiceId/pdf", "routes/office/invoice-pdf.ts"),
      route("records", "routes/office/records.tsx"),
      route("records/csv", "routes/office/records-csv.ts"),
      route("records/pdf", "routes/office/records-pdf.ts"),
      route("dashboard", "routes/office/dashboard.tsx"),
      route("audit", "routes/office/audit.tsx"),
      route("staff", "routes/office/staff.tsx"),
    ]),
  ]),

  ...prefix("api", [
    route("capacity", "routes/api/capacity.ts"),
    route("visits", "routes/api/visits.ts"),
    route("crew/sync", "routes/api/crew-sync.ts"),
    route("stripe/webhook", "routes/api/stripe-webhook.ts"),
    route("runs/:runId/gpx", "routes/api/run-gpx.ts"),
    route("runs/:runId/ics", "routes/api/run-ics.ts"),
    route("base-map", "routes/api/base-map.ts"),
    route("attachments/:attachmentId", "routes/api/attachment.ts"),
    route("customers.csv", "routes/api/customers-csv.ts"),
  ]),

  route("healthz", "routes/api/healthz.ts"),
  route("*", "routes/public/not-found.tsx"),
] satisfies RouteConfig;
