import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { crewNav } from "~/components/area-nav";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  return { user: { name: user.name, role: user.role } };
}

export default function CrewLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user} nav={crewNav()} width="narrow">
      <Outlet />
    </AppShell>
  );
}
