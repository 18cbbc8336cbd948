import { useId } from "react";
import { Form, Link, useNavigation } from "react-router";
import { formatServiceDate } from "~/components/format";
import { Button } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import type { FieldErrors } from "~/forms/field-errors";
import type { MovedVisit, WorkingDayDetail } from "~/models/working-days.server";

/** What the calendar's action answered to a working-day change. */
export type WorkingDayAnswer =
  | { ok: true; intent: string; message: string; moved: MovedVisit[] }
  | { ok: false; intent: string; errors: FieldErrors };

const linkStyle = "inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4";

function colonies(n: number): string {
  return `${n} ${n === 1 ? "colony" : "colonies"}`;
}

/** A note field (textarea) with its error under it. */
function NoteField({ label, hint, error, required }: { label: string; hint?: string; error?: string; required?: boolean }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-semibold">
        {label}
      </label>
      {hint ? (
        <p id={`${id}-hint`} className="text-sm text-ink-soft">
          {hint}
        </p>
      ) : null}
      <textarea
        id={id}
        name="note"
        rows={2}
        maxLength={300}
        required={required}
        aria-invalid={error ? true : undefined}
        aria-describedby={[hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(" ") || undefined}
        className={`rounded-lg border-2 bg-card p-2 ${error ? "border-alarm-700" : "border-line"}`}
      />
      {error ? (
        <p id={`${id}-error`} className="text-sm font-semibold text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/**
 * The working-day panel for one date: its room, which crews work it, and the dispatcher's
 * changes — close or reopen the day or a crew's day, set its capacity. Visits that no longer
 * fit move to the next days with room (the answer lists them).
 */
export function WorkingDayPanel({ detail, answer }: { detail: WorkingDayDetail; answer: WorkingDayAnswer | undefined }) {
  const busy = useNavigation().state === "submitting";
  const errorsFor = (intent: string): FieldErrors => (answer && !answer.ok && answer.intent === intent ? answer.errors : {});
  const working = detail.crews.filter((c) => c.state === "working");
  const closedCrews = detail.crews.filter((c) => c.state === "closed");
  const day = formatServiceDate(detail.date);
  const hidden = (intent: string) => (
    <>
      <input type="hidden" name="intent" value={intent} />
      <input type="hidden" name="date" value={detail.date} />
    </>
  );
  const formError = (intent: string) => {
    const errors = errorsFor(intent);
    const message = errors.form ?? errors.date ?? (intent === "reopen_crew_day" ? errors.crewId : undefined);
    return message ? <FormMessage message={message} /> : null;
  };
  return (
    <section aria-labelledby="working-day-heading" className="flex flex-col gap-4">
      <Card>
        <h2 id="working-day-heading" className="text-lg font-bold">
          {day}
        </h2>
        {answer?.ok ? (
          <div role="status" className="mt-2 rounded-lg border-2 border-pine-600 bg-pine-50 px-3 py-2 text-pine-900">
            <p className="font-semibold">{answer.message}</p>
            {answer.moved.length > 0 ? (
              <ul aria-label="Visits moved" className="mt-1 list-disc pl-5">
                {answer.moved.map((m) => (
                  <li key={m.visitId}>
                    <Link to={`/dispatch/visits/${m.visitId}`} className="font-semibold underline">
                      {m.yardName} of {m.customerName}
                    </Link>{" "}
                    ({colonies(m.colonies)}): {formatServiceDate(m.fromDate, false)} → {formatServiceDate(m.toDate)}
                  </li>
                ))}
              </ul>
            ) : null}
          </div>
        ) : null}
        <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
          <dt className="font-semibold">State</dt>
          <dd>{detail.dayClosed ? `Closed${detail.note ? `: ${detail.note}` : ""}` : detail.crewsWorking === 0 ? "No crew works this day" : "Open"}</dd>
          {!detail.dayClosed && detail.note ? (
            <>
              <dt className="font-semibold">Note</dt>
              <dd>{detail.note}</dd>
            </>
          ) : null}
          <dt className="font-semibold">Room</dt>
          <dd>
            {detail.booked} of {colonies(detail.capacity)} booked, {detail.remaining} still fit
          </dd>
          <dt className="font-semibold">Capacity</dt>
          <dd>{detail.capacityOverride != null ? `Set to ${colonies(detail.capacityOverride)} (crews' estimate ${detail.estimate})` : `Crews' estimate (${detail.estimate})`}</dd>
          <dt className="font-semibold">Open visits</dt>
          <dd>
            {detail.openVisits} ({colonies(detail.openColonies)}){detail.onPublishedRuns > 0 ? `, ${detail.onPublishedRuns} on published runs` : ""}
          </dd>
        </dl>
        <h3 className="mt-3 font-bold">Crews</h3>
        <ul className="mt-1">
          {detail.crews.map((c) => (
            <li key={c.crewId}>
              <span className="font-semibold">{c.name}</span>:{" "}
              {c.state === "working" ? "working" : c.state === "closed" ? `day closed${c.note ? ` (${c.note})` : ""}` : `does not work on ${detail.weekday}s`}
            </li>
          ))}
          {detail.crews.length === 0 ? <li className="text-ink-soft">No active crews.</li> : null}
        </ul>
        <p className="mt-2 flex flex-wrap gap-x-4">
          <Link to={`/dispatch/days/${detail.date}`} className={linkStyle}>
            Plan this day
          </Link>
          <Link to="/dispatch/crews" className={linkStyle}>
            Crews
          </Link>
        </p>
      </Card>

      {detail.past ? (
        <p className="text-ink-soft">This day is past; it can no longer be changed.</p>
      ) : (
        <>
          {detail.dayClosed ? (
            <Card title="Reopen the day">
              <Form method="post" noValidate preventScrollReset className="flex flex-col gap-3">
                {hidden("reopen_day")}
                {formError("reopen_day")}
                <div>
                  <Button type="submit" variant="secondary" disabled={busy}>
                    Reopen the day
                  </Button>
                </div>
              </Form>
            </Card>
          ) : (
            <Card title="Close the day">
              <Form method="post" noValidate preventScrollReset className="flex flex-col gap-3">
                {hidden("close_day")}
                {formError("close_day")}
                <NoteField
                  label="Why the day is closed"
                  hint="Holiday, weather… Customers whose visits move to another day are told this."
                  error={errorsFor("close_day").note}
                  required
                />
                <div>
                  <Button type="submit" variant="danger" disabled={busy}>
                    Close the day
                  </Button>
                </div>
              </Form>
            </Card>
          )}

          {!detail.dayClosed && (working.length > 0 || closedCrews.length > 0) ? (
            <Card title="A crew's day">
              {working.length > 0 ? (
                <Form method="post" noValidate preventScrollReset className="flex flex-col gap-3">
                  {hidden("close_crew_day")}
                  {formError("close_crew_day")}
                  <CrewSelect crews={working} error={errorsFor("close_crew_day").crewId} />
                  <NoteField label="Why the crew is off" hint="Kept inside the business; customers are told only that their visit moved." error={errorsFor("close_crew_day").note} required />
                  <div>
                    <Button type="submit" variant="secondary" disabled={busy}>
                      Close the crew's day
                    </Button>
                  </div>
                </Form>
              ) : null}
              {closedCrews.length > 0 ? (
                <div className="mt-3 flex flex-col gap-2">
                  {formError("reopen_crew_day")}
                  {closedCrews.map((c) => (
                    <Form key={c.crewId} method="post" noValidate preventScrollReset>
                      {hidden("reopen_crew_day")}
                      <input type="hidden" name="crewId" value={c.crewId} />
                      <Button type="submit" variant="secondary" disabled={busy}>
                        Reopen {c.name}'s day
                      </Button>
                    </Form>
                  ))}
                </div>
              ) : null}
            </Card>
          ) : null}

          {!detail.dayClosed ? (
            <Card title="Set the day's capacity">
              <Form method="post" noValidate preventScrollReset className="flex flex-col gap-3">
                {hidden("set_capacity")}
                {formError("set_capacity")}
                <Field
                  label="Colonies the day can take"
                  name="capacity"
                  type="number"
                  inputMode="numeric"
                  min={0}
                  max={5000}
                  step={1}
                  defaultValue={detail.capacityOverride ?? ""}
                  hint={`Leave empty for the crews' estimate (${detail.estimate}). Visits that no longer fit move to the next days with room.`}
                  error={errorsFor("set_capacity").capacity}
                />
                <NoteField label="Note (optional)" error={errorsFor("set_capacity").note} />
                <div>
                  <Button type="submit" variant="secondary" disabled={busy}>
                    Set capacity
                  </Button>
                </div>
              </Form>
            </Card>
          ) : null}
        </>
      )}
    </section>
  );
}

function CrewSelect({ crews, error }: { crews: { crewId: number; name: string }[]; error?: string }) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-semibold">
        Crew
      </label>
      <select
        id={id}
        name="crewId"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        className={`min-h-11 rounded-lg border-2 bg-card px-2 text-base ${error ? "border-alarm-700" : "border-line"}`}
      >
        {crews.map((c) => (
          <option key={c.crewId} value={c.crewId}>
            {c.name}
          </option>
        ))}
      </select>
      {error ? (
        <p id={`${id}-error`} className="text-sm font-semibold text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}
