import { data } from "react-router";
import { z } from "zod";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { businessToday } from "~/services/clock.server";
import { roomBetween } from "~/models/capacity.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { requireRole } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/capacity";

const MAX_DAYS = 62;
// A date that is not on the calendar (2027-02-30) is a 400 here, not an error further down.
// zod runs the object's checks even when a field failed, so they look at real dates only.
const bothDates = (q: { from: string; to: string }) => isCalendarDate(q.from) && isCalendarDate(q.to);
const query = z
  .object({
    from: z.string().refine(isCalendarDate, "from must be a date on the calendar (YYYY-MM-DD)."),
    to: z.string().refine(isCalendarDate, "to must be a date on the calendar (YYYY-MM-DD)."),
  })
  .refine((q) => !bothDates(q) || calendarDaysBetween(q.from, q.to) >= 0, { message: "to must not be before from.", path: ["to"] })
  .refine((q) => !bothDates(q) || calendarDaysBetween(q.from, q.to) < MAX_DAYS, { message: `Ask for at most ${MAX_DAYS} days at once.`, path: ["to"] });

// Colonies that still fit per day, for the booking calendar (fetched by the browser).
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, ["customer", "dispatcher", "office", "owner"]);
  const url = new URL(request.url);
  // Without a range: the next six weeks from today.
  const today = await businessToday(db);
  const parsed = query.safeParse({ from: url.searchParams.get("from") ?? today, to: url.searchParams.get("to") ?? addCalendarDays(today, 41) });
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    return data({ error: issue.message, field: String(issue.path[0] ?? "from") }, { status: 400 });
  }
  const settings = await loadBusinessSettings(db);
  const days = await roomBetween(db, settings, parsed.data.from, parsed.data.to);
  return Response.json({ days }, { headers: { "Cache-Control": "no-store" } });
}
