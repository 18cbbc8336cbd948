import { data } from "react-router";
import { VisitCalendar } from "~/components/calendar/visit-calendar";
import { WorkingDayPanel, type WorkingDayAnswer } from "~/components/calendar/visit-calendar-day-panel";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader } from "~/components/ui/card";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { fieldErrors, formValues } from "~/forms/field-errors";
import { workingDaySchema, type WorkingDayChange } from "~/forms/working-day";
import { changeWorkingDay, workingDayDetail, workingDaysBetween, WorkingDayRefused, type WorkingDayResult } from "~/models/working-days.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { isCalendarDate, readForm } from "~/services/request.server";
import type { Route } from "./+types/calendar";

// The dispatcher's calendar: every visit by day, and the working-day panel of the chosen day
// (close or reopen the day or a crew's day, set its capacity). `from`/`to` in the URL ask
// for the working-day states of another stretch of days (the calendar fetches them as it
// moves between months).

export const meta: Route.MetaFunction = () => [{ title: "Calendar · Varroute" }];

const MAX_STATE_DAYS = 62;

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const url = new URL(request.url);
  const today = await businessToday(db);
  const asked = url.searchParams.get("date");
  const selected = asked && isCalendarDate(asked) ? asked : today;
  const from = url.searchParams.get("from");
  const to = url.searchParams.get("to");
  const range =
    from && to && isCalendarDate(from) && isCalendarDate(to) && calendarDaysBetween(from, to) >= 0 && calendarDaysBetween(from, to) < MAX_STATE_DAYS
      ? { from, to }
      : // The month view around the chosen day: up to six weeks from the week before its month.
        { from: addCalendarDays(`${selected.slice(0, 8)}01`, -7), to: addCalendarDays(`${selected.slice(0, 8)}01`, 41) };
  const crews = await db("crews").where({ active: true }).orderBy("name").select("id", "name");
  return {
    crews,
    start: selected,
    selected,
    days: await workingDaysBetween(db, range.from, range.to),
    detail: await workingDayDetail(db, selected),
  };
}

function successMessage(change: WorkingDayChange, result: WorkingDayResult, crewName: string | null): string {
  const day = formatServiceDate(result.date);
  // Visits moved off the day, and the later rounds of their courses that moved with them.
  const moved = result.moved.filter((m) => m.fromDate === result.date).length;
  const rounds = result.moved.length - moved;
  const roundsText = rounds > 0 ? ` (with ${rounds} later ${rounds === 1 ? "round" : "rounds"} of their courses)` : "";
  const movedText = moved > 0 ? ` ${moved} ${moved === 1 ? "visit" : "visits"} moved to the next days with room${roundsText}; the customers are being e-mailed.` : " No visit had to move.";
  switch (change.intent) {
    case "close_day":
      return `Closed ${day}.${movedText}`;
    case "reopen_day":
      return `Reopened ${day}.`;
    case "close_crew_day":
      return `Closed ${crewName ?? "the crew"}'s day on ${day}.${movedText}`;
    case "reopen_crew_day":
      return `Reopened ${crewName ?? "the crew"}'s day on ${day}.`;
    case "set_capacity":
      return `${change.capacity === null ? `${day} takes the crews' estimate again` : `${day} takes at most ${change.capacity} colonies`} (${result.room.capacity} now).${movedText}`;
  }
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const fields = formValues(await readForm(request)) as Record<string, string>;
  const intent = typeof fields.intent === "string" ? fields.intent : "";
  const parsed = workingDaySchema.safeParse(fields);
  if (!parsed.success) return data<WorkingDayAnswer>({ ok: false, intent, errors: fieldErrors(parsed.error) }, { status: 400 });
  try {
    const result = await changeWorkingDay(db, parsed.data, user.id);
    const crewName = "crewId" in parsed.data ? ((await db("crews").where({ id: parsed.data.crewId }).first("name"))?.name ?? null) : null;
    return data<WorkingDayAnswer>({ ok: true, intent, message: successMessage(parsed.data, result, crewName), moved: result.moved });
  } catch (error) {
    if (error instanceof WorkingDayRefused) return data<WorkingDayAnswer>({ ok: false, intent, errors: { [error.field]: error.message } }, { status: 409 });
    throw error;
  }
}

export default function Calendar({ loaderData, actionData }: Route.ComponentProps) {
  const answer = actionData as WorkingDayAnswer | undefined;
  return (
    <>
      <PageHeader
        title="Calendar"
        subtitle="Every visit by day. Drag a visit to another day to move it (the customer is e-mailed); click it to see, move or cancel it. Choose a day to close it, close a crew's day or set its capacity."
      />
      <div className="grid gap-6 xl:grid-cols-[minmax(0,2fr)_minmax(18rem,1fr)]">
        <div className="min-w-0">
          <form method="get" className="mb-3 flex flex-wrap items-end gap-2">
            <div className="flex flex-col gap-1">
              <label htmlFor="calendar-day" className="font-semibold">
                Day
              </label>
              <input id="calendar-day" name="date" type="date" defaultValue={loaderData.selected} className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base" />
            </div>
            <button type="submit" className="inline-flex min-h-11 items-center rounded-lg border-2 border-pine-700 bg-card px-4 font-semibold text-pine-800 hover:bg-pine-50">
              Show the day
            </button>
          </form>
          <VisitCalendar
            crews={loaderData.crews}
            initialDate={loaderData.start}
            selectedDate={loaderData.selected}
            dayStates={loaderData.days}
            refreshKey={answer?.ok ? `${answer.intent}:${answer.message}:${answer.moved.map((m) => m.visitId).join(",")}` : ""}
          />
        </div>
        <WorkingDayPanel detail={loaderData.detail} answer={answer} />
      </div>
      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
