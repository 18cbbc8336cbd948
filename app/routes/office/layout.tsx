import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.office);
  return { user: { name: user.name, role: user.role } };
}

export default function OfficeLayout({ loaderData }: Route.ComponentProps) {
  const nav = [
    { to: "/office", label: "Overview", end: true },
    { to: "/office/customers", label: "Customers" },
    { to: "/office/invoices", label: "Invoices" },
    { to: "/office/records", label: "Records" },
    { to: "/office/dashboard", label: "Season" },
    ...(loaderData.user.role === "owner" ? [{ to: "/office/audit", label: "Audit trail" }] : []),
    ...(loaderData.user.role === "owner" ? [{ to: "/dispatch", label: "Dispatch" }] : []),
  ];
  return (
    <AppShell user={loaderData.user} nav={nav}>
      <Outlet />
    </AppShell>
  );
}
