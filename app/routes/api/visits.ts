import { data } from "react-router";
import { z } from "zod";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { businessToday } from "~/services/clock.server";
import { visitsBetween } from "~/models/visits.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/visits";

// zod runs the object's check even when a field failed, so it looks at real dates only.
const query = z
  .object({
    from: z.string().refine(isCalendarDate, "from must be a date on the calendar (YYYY-MM-DD)."),
    to: z.string().refine(isCalendarDate, "to must be a date on the calendar (YYYY-MM-DD)."),
  })
  .refine((q) => !isCalendarDate(q.from) || !isCalendarDate(q.to) || (calendarDaysBetween(q.from, q.to) >= 0 && calendarDaysBetween(q.from, q.to) <= 62), {
    message: "Ask for 0 to 62 days from `from`.",
    path: ["to"],
  });

// Visits for the dispatcher's calendar, for the range it shows.
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const url = new URL(request.url);
  // Without a range: the next six weeks from today.
  const today = await businessToday(db);
  const parsed = query.safeParse({ from: url.searchParams.get("from") ?? today, to: url.searchParams.get("to") ?? addCalendarDays(today, 41) });
  if (!parsed.success) return data({ error: parsed.error.issues[0].message }, { status: 400 });
  return Response.json({ visits: await visitsBetween(db, parsed.data.from, parsed.data.to) }, { headers: { "Cache-Control": "no-store" } });
}
