import dayGridPlugin from "@fullcalendar/daygrid";
import FullCalendar from "@fullcalendar/react";
import { useCallback, useEffect, useRef, useState } from "react";
import type { DayRoom } from "~/models/capacity.server";

type Props = {
  /** The first day that may be booked (YYYY-MM-DD). */
  firstBookable: string;
  lastBookable: string;
  selected: string | null;
  /** Colonies the chosen yards need; days with less room cannot be picked. */
  needed: number;
  onSelect: (date: string) => void;
};

const MONTHS = ["January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"];

function iso(date: Date) {
  return `${date.getFullYear()}-${String(date.getMonth() + 1).padStart(2, "0")}-${String(date.getDate()).padStart(2, "0")}`;
}

/** A month calendar showing, per day, how many colonies still fit; fetched from /api/capacity. */
export default function BookingCalendar({ firstBookable, lastBookable, selected, needed, onSelect }: Props) {
  const [room, setRoom] = useState<Record<string, DayRoom>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const [loading, setLoading] = useState(false);
  const request = useRef(0);

  const load = useCallback(async (from: string, to: string) => {
    const mine = ++request.current;
    setLoading(true);
    try {
      const response = await fetch(`/api/capacity?from=${from}&to=${to}`, { headers: { Accept: "application/json" } });
      if (!response.ok) throw new Error(`the server answered ${response.status}`);
      const body = (await response.json()) as { days: DayRoom[] };
      if (mine !== request.current) return;
      setRoom(Object.fromEntries(body.days.map((d) => [d.date, d])));
      setProblem(null);
    } catch {
      if (mine === request.current) setProblem("The free room per day could not be loaded. Check your connection and try again.");
    } finally {
      if (mine === request.current) setLoading(false);
    }
  }, []);

  useEffect(() => () => void (request.current = -1), []);

  const bookable = (date: string) => {
    const day = room[date];
    return date >= firstBookable && date <= lastBookable && day !== undefined && !day.closed && day.remaining >= Math.max(needed, 1);
  };

  return (
    <div className="booking-calendar" aria-busy={loading}>
      {problem ? (
        <p role="alert" className="mb-2 rounded-lg border-2 border-alarm-700 bg-alarm-100 p-3 font-semibold text-alarm-700">
          {problem}
        </p>
      ) : null}
      <FullCalendar
        plugins={[dayGridPlugin]}
        initialView="dayGridMonth"
        initialDate={selected ?? firstBookable}
        height="auto"
        // Text buttons (FullCalendar's icon buttons have no text alternative), and day cells
        // without FullCalendar's aria-labelledby, whose name leaves out the cell's content.
        buttonIcons={false}
        dayCellDidMount={(arg) => arg.el.removeAttribute("aria-labelledby")}
        fixedWeekCount={false}
        headerToolbar={{ left: "title", center: "", right: "prev,next" }}
        buttonText={{ prev: "← Earlier", next: "Later →" }}
        validRange={{ start: firstBookable.slice(0, 8) + "01" }}
        datesSet={(info) => {
          const end = new Date(info.end);
          end.setDate(end.getDate() - 1);
          void load(iso(info.start), iso(end));
        }}
        dayCellClassNames={(arg) => {
          const date = iso(arg.date);
          const classes = [];
          if (date === selected) classes.push("vr-day-selected");
          if (room[date] && !bookable(date)) classes.push("vr-day-unavailable");
          else if (room[date]) classes.push("vr-day-open");
          return classes;
        }}
        dayCellContent={(arg) => {
          const date = iso(arg.date);
          const day = room[date];
          let note = "";
          if (!arg.isOther && day && date >= firstBookable && date <= lastBookable) {
            note = day.closed || day.capacity === 0 ? "Closed" : day.remaining === 0 ? "Full" : `${day.remaining} fit`;
          }
          if (arg.isOther) return <span className="vr-day-number vr-day-other">{arg.dayNumberText}</span>;
          return (
            <button type="button" className="vr-day-button" disabled={!bookable(date)} aria-pressed={date === selected} onClick={() => bookable(date) && onSelect(date)}>
              <span className="vr-day-number">{arg.dayNumberText}</span>
              <span className="sr-only"> {MONTHS[arg.date.getMonth()]}</span>
              {note ? <span className="vr-day-room">{note === "Closed" || note === "Full" ? note : <>{note}<span className="sr-only"> colonies</span></>}</span> : null}
            </button>
          );
        }}
      />
    </div>
  );
}
