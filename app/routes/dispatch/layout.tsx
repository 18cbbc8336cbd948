import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  return { user: { name: user.name, role: user.role } };
}

const dispatchNav = (role: string) => [
  { to: "/dispatch", label: "Days ahead", end: true },
  { to: "/dispatch/calendar", label: "Calendar" },
  { to: "/dispatch/map", label: "Map" },
  { to: "/dispatch/customers", label: "Customers" },
  { to: "/dispatch/yards", label: "Yards" },
  { to: "/dispatch/settings", label: "Settings" },
  ...(role === "owner" ? [{ to: "/office", label: "Office" }] : []),
];

export default function DispatchLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user} nav={dispatchNav(loaderData.user.role)}>
      <Outlet />
    </AppShell>
  );
}
