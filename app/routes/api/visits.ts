import { data } from "react-router";
import { z } from "zod";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { businessToday } from "~/services/clock.server";
import { visitsBetween } from "~/models/visits.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/visits";

const query = z
  .object({
    from: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "from must be a date (YYYY-MM-DD)."),
    to: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "to must be a date (YYYY-MM-DD)."),
  })
  .refine((q) => calendarDaysBetween(q.from, q.to) >= 0 && calendarDaysBetween(q.from, q.to) <= 62, {
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
