import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { dispatchNav } from "~/components/area-nav";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  return { user: { name: user.name, role: user.role } };
}

export default function DispatchLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user} nav={dispatchNav(loaderData.user.role)}>
      <Outlet />
    </AppShell>
  );
}
