import { Outlet } from "react-router";
import { AppShell } from "~/components/app-shell";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/layout";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  return { user: { name: user.name, role: user.role } };
}

export default function PortalLayout({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user} nav={[
        { to: "/portal", label: "My yards and visits", end: true },
        { to: "/portal/book", label: "Book a treatment" },
        { to: "/portal/bookings", label: "My bookings" },
        { to: "/portal/invoices", label: "Invoices" },
        { to: "/portal/season", label: "Season report" },
        { to: "/portal/account", label: "Account" },
      ]}>
      <Outlet />
    </AppShell>
  );
}
