import { data } from "react-router";
import { SeasonDashboardView } from "~/components/dashboard/season-dashboard-view";
import { periodPresets, presetOf, readDashboardPeriod } from "~/domain/season-figures";
import { seasonDashboard } from "~/models/season-dashboard.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/dashboard";

export const meta: Route.MetaFunction = () => [{ title: "Season dashboard · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  const url = new URL(request.url);
  const reading = readDashboardPeriod({ from: url.searchParams.get("from"), to: url.searchParams.get("to") }, today);
  const presets = periodPresets(today);
  if (!reading.ok) {
    return data({ today, presets, active: null, input: reading.input, errors: reading.fieldErrors, dashboard: null }, { status: 400 });
  }
  const dashboard = await seasonDashboard(db, reading.period, { timeZone: settings.timeZone });
  return {
    today,
    presets,
    active: presetOf(reading.period, today),
    input: reading.period,
    errors: null,
    dashboard,
  };
}

export default function SeasonDashboardPage({ loaderData }: Route.ComponentProps) {
  return <SeasonDashboardView {...loaderData} />;
}
