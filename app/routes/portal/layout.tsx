import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { portalNav } from "~/components/area-nav";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  return { user: { name: user.name, role: user.role } };
}

export default function PortalLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user} nav={portalNav()}>
      <Outlet />
    </AppShell>
  );
}
