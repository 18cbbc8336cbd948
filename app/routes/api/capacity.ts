import { data } from "react-router";
import { z } from "zod";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { businessToday } from "~/services/clock.server";
import { roomBetween } from "~/models/capacity.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/capacity";

const MAX_DAYS = 62;
const query = z
  .object({
    from: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "from must be a date (YYYY-MM-DD)."),
    to: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "to must be a date (YYYY-MM-DD)."),
  })
  .refine((q) => calendarDaysBetween(q.from, q.to) >= 0, { message: "to must not be before from.", path: ["to"] })
  .refine((q) => calendarDaysBetween(q.from, q.to) < MAX_DAYS, { message: `Ask for at most ${MAX_DAYS} days at once.`, path: ["to"] });

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
