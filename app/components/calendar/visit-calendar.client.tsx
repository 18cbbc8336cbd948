import dayGridPlugin from "@fullcalendar/daygrid";
import interactionPlugin from "@fullcalendar/interaction";
import FullCalendar from "@fullcalendar/react";
import type { EventDropArg, EventInput, EventSourceFuncArg } from "@fullcalendar/core";
import { useEffect, useMemo, useRef, useState } from "react";
import { useFetcher, useNavigate } from "react-router";
import type { CalendarVisit } from "~/models/visits.server";
import type { WorkingDayState } from "~/models/working-days.server";

export const STATUS_STYLE: Record<string, { label: string; colour: string; text: string }> = {
  scheduled: { label: "Scheduled", colour: "#175a43", text: "#ffffff" },
  in_progress: { label: "In progress", colour: "#2b5d8a", text: "#ffffff" },
  deferred: { label: "Deferred", colour: "#c7801a", text: "#17201c" },
  done: { label: "Done", colour: "#d5d2c7", text: "#17201c" },
  cancelled: { label: "Cancelled", colour: "#f6f4ee", text: "#5b6660" },
};

function iso(date: Date) {
  return `${date.getFullYear()}-${String(date.getMonth() + 1).padStart(2, "0")}-${String(date.getDate()).padStart(2, "0")}`;
}

type ActionAnswer = { ok: boolean; errors: Record<string, string | undefined> };

const MONTHS = ["January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"];

/** A day's working state in a few words for its cell: closed, crews off, colonies booked of the room. */
function dayNote(day: WorkingDayState | undefined): { text: string; tone: "closed" | "full" | "open" } | null {
  if (!day) return null;
  if (day.dayClosed) return { text: "Closed", tone: "closed" };
  if (day.capacity === 0) return { text: day.crewsWorking === 0 ? "No crew" : "No room", tone: "closed" };
  const off = day.closedCrews.length ? ` · ${day.closedCrews.join(", ")} off` : "";
  return { text: `${day.booked}/${day.capacity} col.${off}`, tone: day.booked >= day.capacity ? "full" : "open" };
}

/**
 * Every visit on a month or week calendar, filtered by crew and status; drag a visit to move
 * it. Each day cell shows its working state (closed, crews off, colonies booked of its room)
 * and selects the day for the working-day panel beside the calendar.
 */
export default function VisitCalendar({
  crews,
  initialDate,
  selectedDate = null,
  dayStates = [],
  refreshKey = "",
}: {
  crews: { id: number; name: string }[];
  initialDate: string;
  /** The day shown in the working-day panel. */
  selectedDate?: string | null;
  /** Working-day states the page loaded (more are fetched as the calendar moves). */
  dayStates?: WorkingDayState[];
  /** Changes when a working-day change moved visits: events and states are fetched again. */
  refreshKey?: string;
}) {
  const [crew, setCrew] = useState("all");
  const [status, setStatus] = useState("open");
  const [message, setMessage] = useState<{ tone: "error" | "info"; text: string } | null>(null);
  const calendar = useRef<FullCalendar>(null);
  const pendingRevert = useRef<(() => void) | null>(null);
  const fetcher = useFetcher<ActionAnswer>();
  const navigate = useNavigate();
  const states = useFetcher<{ days: WorkingDayState[] }>();
  const range = useRef<{ from: string; to: string } | null>(null);
  const stateByDate = useMemo(() => {
    const map = new Map<string, WorkingDayState>();
    for (const day of dayStates) map.set(day.date, day);
    for (const day of states.data?.days ?? []) map.set(day.date, day);
    return map;
  }, [dayStates, states.data]);

  useEffect(() => {
    if (!refreshKey) return;
    calendar.current?.getApi().refetchEvents();
    if (range.current) states.load(`/dispatch/calendar?from=${range.current.from}&to=${range.current.to}`);
    // Only a new refreshKey asks again (the fetcher object changes with every load).
  }, [refreshKey]);

  useEffect(() => {
    if (fetcher.state !== "idle" || !fetcher.data) return;
    if (fetcher.data.ok) {
      setMessage({ tone: "info", text: "Visit moved; the customer is being e-mailed." });
    } else {
      pendingRevert.current?.();
      setMessage({ tone: "error", text: Object.values(fetcher.data.errors).filter(Boolean).join(" ") || "The visit could not be moved." });
    }
    pendingRevert.current = null;
    calendar.current?.getApi().refetchEvents();
  }, [fetcher.state, fetcher.data]);

  useEffect(() => {
    calendar.current?.getApi().refetchEvents();
  }, [crew, status]);

  const source = useMemo(
    () => async (info: EventSourceFuncArg): Promise<EventInput[]> => {
      const end = new Date(info.end);
      end.setDate(end.getDate() - 1);
      const response = await fetch(`/api/visits?from=${iso(info.start)}&to=${iso(end)}`);
      if (!response.ok) throw new Error(`visits: ${response.status}`);
      const { visits } = (await response.json()) as { visits: CalendarVisit[] };
      return visits
        .filter((v) => crew === "all" || (crew === "none" ? v.crewId === null : String(v.crewId) === crew))
        .filter((v) => (status === "all" ? true : status === "open" ? v.status !== "cancelled" : v.status === status))
        .map((v) => {
          const style = STATUS_STYLE[v.status] ?? STATUS_STYLE.scheduled;
          return {
            id: String(v.id),
            start: v.serviceDate,
            allDay: true,
            title: `${v.yardName} · ${v.colonies} col.${v.crewName ? ` · ${v.crewName}` : ""}`,
            backgroundColor: style.colour,
            borderColor: v.crewName ? "#17201c" : style.colour,
            textColor: style.text,
            startEditable: v.status === "scheduled" || v.status === "deferred",
            extendedProps: { status: v.status },
          };
        });
    },
    [crew, status],
  );

  function onDrop(arg: EventDropArg) {
    const toDate = arg.event.startStr.slice(0, 10);
    pendingRevert.current = arg.revert;
    setMessage(null);
    fetcher.submit({ intent: "reschedule", toDate }, { method: "post", action: `/dispatch/visits/${arg.event.id}` });
  }

  return (
    <div className="booking-calendar">
      <div className="mb-3 flex flex-wrap items-end gap-3">
        <label className="flex flex-col text-sm font-semibold">
          Crew
          <select value={crew} onChange={(e) => setCrew(e.target.value)} className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base">
            <option value="all">All crews</option>
            <option value="none">Not on a run</option>
            {crews.map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col text-sm font-semibold">
          Status
          <select value={status} onChange={(e) => setStatus(e.target.value)} className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base">
            <option value="open">All but cancelled</option>
            <option value="all">All</option>
            {Object.entries(STATUS_STYLE).map(([value, s]) => (
              <option key={value} value={value}>
                {s.label}
              </option>
            ))}
          </select>
        </label>
        <ul className="flex flex-wrap gap-2 text-sm" aria-label="Colours">
          {Object.entries(STATUS_STYLE).map(([value, s]) => (
            <li key={value} className="flex items-center gap-1">
              <span className="inline-block h-4 w-4 rounded border border-line" style={{ background: s.colour }} aria-hidden="true" />
              {s.label}
            </li>
          ))}
          <li className="flex items-center gap-1">
            <span className="inline-block h-4 w-4 rounded border-2 border-ink" aria-hidden="true" /> dark edge: on a crew's run
          </li>
        </ul>
      </div>
      {message ? (
        <p role={message.tone === "error" ? "alert" : "status"} className={`mb-3 rounded-lg border-2 px-3 py-2 font-semibold ${message.tone === "error" ? "border-alarm-700 bg-alarm-100 text-alarm-700" : "border-pine-600 bg-pine-50 text-pine-900"}`}>
          {message.text}
        </p>
      ) : null}
      <FullCalendar
        ref={calendar}
        plugins={[dayGridPlugin, interactionPlugin]}
        initialView="dayGridMonth"
        initialDate={initialDate}
        height="auto"
        // Text buttons (FullCalendar's icon buttons have no text alternative), and day cells
        // without FullCalendar's aria-labelledby, whose name leaves out the cell's content.
        buttonIcons={false}
        dayCellDidMount={(arg) => arg.el.removeAttribute("aria-labelledby")}
        headerToolbar={{ left: "title", center: "", right: "today dayGridMonth,dayGridWeek prev,next" }}
        buttonText={{ today: "Today", month: "Month", week: "Week", prev: "← Earlier", next: "Later →" }}
        dayMaxEvents={false}
        events={source}
        eventDrop={onDrop}
        datesSet={(info) => {
          const end = new Date(info.end);
          end.setDate(end.getDate() - 1);
          const next = { from: iso(info.start), to: iso(end) };
          if (range.current?.from === next.from && range.current?.to === next.to) return;
          range.current = next;
          states.load(`/dispatch/calendar?from=${next.from}&to=${next.to}`);
        }}
        dayCellClassNames={(arg) => {
          const date = iso(arg.date);
          const classes: string[] = [];
          if (date === selectedDate) classes.push("vr-day-selected");
          const note = dayNote(stateByDate.get(date));
          if (note?.tone === "closed") classes.push("bg-paper");
          return classes;
        }}
        dayCellContent={(arg) => {
          const date = iso(arg.date);
          const note = dayNote(stateByDate.get(date));
          const selected = date === selectedDate;
          return (
            <button
              type="button"
              className="vr-day-button"
              aria-pressed={selected}
              onClick={() => navigate(`/dispatch/calendar?date=${date}`, { preventScrollReset: true })}
            >
              <span className="vr-day-number">{arg.dayNumberText}</span>
              <span className="sr-only"> {MONTHS[arg.date.getMonth()]}, show this day</span>
              {note ? (
                <span className={`vr-day-room block ${selected ? "" : note.tone === "closed" ? "!text-alarm-700" : note.tone === "full" ? "!text-ochre-700" : ""}`}>
                  {note.text}
                  {note.tone !== "closed" ? <span className="sr-only"> booked of the room</span> : null}
                </span>
              ) : null}
            </button>
          );
        }}
        eventClick={(arg) => {
          arg.jsEvent.preventDefault();
          navigate(`/dispatch/visits/${arg.event.id}`);
        }}
      />
    </div>
  );
}
