import type { DayRunStop, StopIssue } from "~/models/day-plan.server";
import { formatDose, type UnitSystem } from "~/domain/units";

/** One stop on a crew's run: drag it, or use the controls (keyboard and touch). */
export function StopCard({
  stop,
  number,
  colour,
  issues,
  unitSystem,
  crews,
  editable,
  onMove,
  onLock,
}: {
  stop: DayRunStop;
  number: number;
  colour: string;
  issues: StopIssue[];
  unitSystem: UnitSystem;
  crews: { crewId: number; name: string }[];
  editable: boolean;
  onMove: (visitId: number, toCrewId: number, toPosition: number) => void;
  onLock: (visitId: number, locked: boolean) => void;
}) {
  const broken = issues.length > 0;
  return (
    <li
      draggable={editable}
      onDragStart={(e) => {
        e.dataTransfer.setData("text/plain", String(stop.visitId));
        e.dataTransfer.effectAllowed = "move";
      }}
      data-visit-id={stop.visitId}
      data-position={stop.position}
      data-testid={`stop-${stop.visitId}`}
      className={`rounded-lg border-2 bg-card p-3 ${broken ? "border-alarm-700" : "border-line"} ${editable ? "cursor-grab" : ""}`}
    >
      <div className="flex items-start gap-2">
        <span className="flex h-9 w-9 shrink-0 items-center justify-center rounded-full font-bold text-white" style={{ background: colour }} aria-hidden="true">
          {number}
        </span>
        <div className="min-w-0 flex-1">
          <p className="font-bold">
            <span className="sr-only">Stop {number}: </span>
            {stop.yardName}
            {stop.locked ? <span className="ml-2 rounded bg-ink px-1.5 py-0.5 text-xs text-white">locked</span> : null}
          </p>
          <p className="text-sm text-ink-soft">{stop.customerName}</p>
          <p className="text-sm font-semibold tabular-nums">
            {stop.arrive}–{stop.leave} · window {stop.windowLabel}
          </p>
          <p className="text-sm">
            {stop.colonies} colonies · {formatDose(stop.grams, unitSystem)}
          </p>
          {stop.accessNotes ? <p className="mt-1 line-clamp-2 text-sm text-ink-soft">{stop.accessNotes}</p> : null}
          {issues.map((issue) => (
            <p key={issue.message} role="alert" className="mt-1 text-sm font-semibold text-alarm-700">
              {issue.message}
            </p>
          ))}
        </div>
      </div>
      {editable ? (
        <div className="mt-2 flex flex-wrap items-center gap-2">
          <label className="sr-only" htmlFor={`move-${stop.visitId}`}>
            Move {stop.yardName} to
          </label>
          <select
            id={`move-${stop.visitId}`}
            className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-sm"
            value=""
            onChange={(e) => {
              const [crewId, position] = e.target.value.split(":").map(Number);
              if (crewId) onMove(stop.visitId, crewId, position);
            }}
          >
            <option value="">Move to…</option>
            <option value={`${stop.crewId}:${Math.max(0, stop.position - 1)}`} disabled={stop.position === 0}>
              Earlier on this run
            </option>
            <option value={`${stop.crewId}:${stop.position + 1}`}>Later on this run</option>
            {crews
              .filter((c) => c.crewId !== stop.crewId)
              .map((c) => (
                <option key={c.crewId} value={`${c.crewId}:999`}>
                  End of {c.name}'s run
                </option>
              ))}
          </select>
          <button
            type="button"
            onClick={() => onLock(stop.visitId, !stop.locked)}
            aria-pressed={stop.locked}
            className="min-h-11 rounded-lg border-2 border-line px-3 text-sm font-semibold hover:bg-paper"
          >
            {stop.locked ? "Unlock" : "Lock"} <span className="sr-only">{stop.yardName}</span>
          </button>
        </div>
      ) : null}
    </li>
  );
}
