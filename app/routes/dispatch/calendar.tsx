import { VisitCalendar } from "~/components/calendar/visit-calendar";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader } from "~/components/ui/card";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/calendar";

export const meta: Route.MetaFunction = () => [{ title: "Calendar · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const crews = await db("crews").where({ active: true }).orderBy("name").select("id", "name");
  const asked = new URL(request.url).searchParams.get("date");
  return { crews, start: asked && isCalendarDate(asked) ? asked : await businessToday(db) };
}

export default function Calendar({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <PageHeader title="Calendar" subtitle="Every visit by day. Drag a visit to another day to move it (the customer is e-mailed); click it to see, move or cancel it." />
      <VisitCalendar crews={loaderData.crews} initialDate={loaderData.start} />
      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
