import { useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { BookingCalendar } from "~/components/calendar/booking-calendar";
import { broodStatusName, formatServiceDate, timePreferenceName, visitStatusName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { bookingChangeView, customerVisitChangeSchema } from "~/models/booking-changes.server";
import { cancelVisit, rescheduleVisit, VisitChangeRefused } from "~/models/visit-changes.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/booking-change";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Change or cancel: ${data?.visit.yardName ?? "a visit"} · Varroute` }];

const NOT_YOURS = "There is no visit with that number in your account.";

async function loadView(customerId: string, visitIdParam: string | undefined) {
  const view = await bookingChangeView(db, { customerId, visitId: idParam(visitIdParam, "visit") });
  // Another customer's visit answers exactly as a visit that does not exist.
  if (!view) throw data(NOT_YOURS, { status: 404 });
  return view;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  return loadView(user.customerId, params.visitId);
}

type Answer = { errors: FieldErrors; intent: string; values: Record<string, string | string[]> };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCustomer(request);
  const view = await loadView(user.customerId, params.visitId);
  const values = formValues(await readForm(request));
  const intent = String(values.intent ?? "");
  const parsed = customerVisitChangeSchema.safeParse(values);
  if (!parsed.success) {
    const errors = fieldErrors(parsed.error);
    // A post without a known intent has no field of its own to show the message at.
    if (errors.intent) errors.form = errors.intent;
    return data<Answer>({ errors, intent, values }, { status: 400 });
  }
  try {
    if (parsed.data.intent === "move") {
      await rescheduleVisit(db, { visitId: view.visit.id, toDate: parsed.data.toDate, reason: null, actorUserId: user.id, byCustomerId: user.customerId });
      return redirect(`/portal/bookings?moved=${parsed.data.toDate}`);
    }
    await cancelVisit(db, { visitId: view.visit.id, reason: parsed.data.reason, actorUserId: user.id, byCustomerId: user.customerId });
    return redirect(`/portal/bookings?cancelled=${view.visit.serviceDate}`);
  } catch (error) {
    if (error instanceof VisitChangeRefused) return data<Answer>({ errors: { [error.field]: error.message }, intent, values }, { status: 409 });
    throw error;
  }
}

function capitalised(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function roundsText(rounds: readonly { roundNumber: number; date: string }[]): string {
  const parts = rounds.map((r) => `round ${r.roundNumber} (${formatServiceDate(r.date, false)})`);
  return parts.length <= 1 ? (parts[0] ?? "") : `${parts.slice(0, -1).join(", ")} and ${parts[parts.length - 1]}`;
}

export default function BookingChange({ loaderData, actionData }: Route.ComponentProps) {
  const { visit, rounds, block, blockMessage, window: moveWindow, previousRound, laterRounds, roundsNotBooked } = loaderData;
  const busy = useNavigation().state === "submitting";
  const errors: FieldErrors = actionData?.errors ?? {};
  const kept = actionData?.values ?? {};
  const keptDate = actionData?.intent === "move" && typeof kept.toDate === "string" ? kept.toDate : "";
  const [date, setDate] = useState<string | null>(keptDate || null);
  const multiRound = visit.roundsPlanned > 1;

  const laterCancelled = [
    laterRounds.length ? `${roundsText(laterRounds)} ${laterRounds.length === 1 ? "is" : "are"} cancelled with it` : null,
    roundsNotBooked > 0 ? `the ${roundsNotBooked === 1 ? "round" : `${roundsNotBooked} rounds`} not booked yet will not be booked` : null,
  ]
    .filter(Boolean)
    .join(", and ");
  const cancelText = multiRound
    ? `Cancelling this visit ends its course: the rounds only work one after another.${laterCancelled ? ` ${capitalised(laterCancelled)}.` : ""} Rounds already done stay as they are. You can book again at any time.`
    : "You can book again at any time.";

  return (
    <>
      <Link to="/portal/bookings" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← My bookings
      </Link>
      <PageHeader
        title={`Change or cancel: ${visit.yardName}`}
        subtitle={`${formatServiceDate(visit.serviceDate)} · ${multiRound ? `round ${visit.roundNumber} of ${visit.roundsPlanned} · ` : ""}${visit.colonies} ${visit.colonies === 1 ? "colony" : "colonies"}`}
      />
      {errors.form ? (
        <div className="mb-4">
          <FormMessage message={errors.form} />
        </div>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <Card title="The visit">
            <dl className="grid gap-3 sm:grid-cols-2">
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Yard</dt>
                <dd>
                  <Link to={`/portal/yards/${visit.yardId}`} className="font-semibold text-pine-800 underline">
                    {visit.yardName}
                  </Link>
                  {visit.yardAddress ? <span className="block">{visit.yardAddress}</span> : null}
                </dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Day</dt>
                <dd data-testid="visit-day">{formatServiceDate(visit.serviceDate)}</dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Colonies</dt>
                <dd>
                  {visit.colonies} · {broodStatusName(visit.broodStatus)}
                </dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Time of day</dt>
                <dd>{timePreferenceName(visit.timePreference)}</dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Status</dt>
                <dd>{visitStatusName(visit.status)}</dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Changes close</dt>
                <dd>{loaderData.deadlineText}</dd>
              </div>
            </dl>
            <h3 className="mt-4 font-bold">Rounds of the course</h3>
            <p className="text-sm text-ink-soft">
              {multiRound
                ? `Colonies with brood get ${visit.roundsPlanned} rounds about ${visit.intervalDays} days apart; the vapor does not reach mites under brood cappings, so each round catches the mites that came out since the last.`
                : "A broodless yard gets one round."}
            </p>
            <ol className="mt-2 flex flex-col gap-1">
              {rounds.map((r) => (
                <li key={r.roundNumber} className={r.roundNumber === visit.roundNumber ? "font-semibold" : undefined}>
                  Round {r.roundNumber}: {formatServiceDate(r.date)} · {visitStatusName(r.status)}
                  {r.roundNumber === visit.roundNumber ? " (this visit)" : ""}
                </li>
              ))}
              {roundsNotBooked > 0 ? <li className="text-ink-soft">Later rounds are booked after each visit.</li> : null}
            </ol>
          </Card>

          {block ? (
            <Card title="This visit can no longer be changed here">
              <p role="status" className="font-semibold" data-testid="change-closed">
                {blockMessage}
              </p>
            </Card>
          ) : (
            <>
              <Card title="Move to another day">
                <p className="mb-3 text-ink-soft">
                  You can change this visit until {loaderData.cutoffHours} hours before its day begins ({loaderData.deadlineText}).{" "}
                  {previousRound
                    ? `Round ${visit.roundNumber} stays about ${visit.intervalDays} days after round ${previousRound.roundNumber} (${formatServiceDate(previousRound.date, false)}), so only those days can be picked. `
                    : ""}
                  {laterRounds.length
                    ? `${capitalised(roundsText(laterRounds))} ${laterRounds.length === 1 ? "moves" : "move"} with it by the same number of days, so the rounds stay as far apart as planned.`
                    : ""}
                </p>
                {moveWindow ? (
                  <Form method="post" noValidate className="flex flex-col gap-3">
                    <input type="hidden" name="intent" value="move" />
                    <BookingCalendar firstBookable={moveWindow.first} lastBookable={moveWindow.last} selected={date} needed={visit.colonies} onSelect={setDate} />
                    <div className="flex max-w-xs flex-col gap-1">
                      <label htmlFor="toDate" className="font-semibold">
                        New day
                      </label>
                      <input
                        id="toDate"
                        name="toDate"
                        type="date"
                        min={moveWindow.first}
                        max={moveWindow.last}
                        value={date ?? ""}
                        onChange={(e) => setDate(e.target.value || null)}
                        aria-invalid={errors.toDate ? true : undefined}
                        aria-describedby={errors.toDate ? "toDate-error" : "toDate-hint"}
                        className={`min-h-11 rounded-lg border-2 bg-card px-3 ${errors.toDate ? "border-alarm-700" : "border-line"}`}
                      />
                      {errors.toDate ? (
                        <p id="toDate-error" className="font-semibold text-alarm-700">
                          {errors.toDate}
                        </p>
                      ) : (
                        <p id="toDate-hint" className="text-sm text-ink-soft">
                          From {formatServiceDate(moveWindow.first)} to {formatServiceDate(moveWindow.last)}, on a day with room for {visit.colonies} colonies.
                        </p>
                      )}
                    </div>
                    <div>
                      <Button type="submit" disabled={busy}>
                        {date ? `Move the visit to ${formatServiceDate(date)}` : "Move the visit"}
                      </Button>
                    </div>
                  </Form>
                ) : (
                  <p className="font-semibold">No day is left that this visit can move to. You can cancel it, or {loaderData.contact}.</p>
                )}
              </Card>

              <Card title="Cancel the visit">
                <p className="mb-3 text-ink-soft" data-testid="cancel-scope">
                  {cancelText}
                </p>
                <Form method="post" noValidate className="flex flex-col gap-3">
                  <input type="hidden" name="intent" value="cancel" />
                  <div className="flex flex-col gap-1">
                    <label htmlFor="reason" className="font-semibold">
                      Reason (optional)
                    </label>
                    <textarea
                      id="reason"
                      name="reason"
                      rows={3}
                      maxLength={500}
                      defaultValue={actionData?.intent === "cancel" && typeof kept.reason === "string" ? kept.reason : ""}
                      aria-invalid={errors.reason ? true : undefined}
                      aria-describedby={errors.reason ? "reason-error" : undefined}
                      className={`rounded-lg border-2 bg-card p-3 ${errors.reason ? "border-alarm-700" : "border-line"}`}
                    />
                    {errors.reason ? (
                      <p id="reason-error" className="font-semibold text-alarm-700">
                        {errors.reason}
                      </p>
                    ) : null}
                  </div>
                  <div>
                    <Button type="submit" variant="danger" disabled={busy}>
                      Cancel the visit
                    </Button>
                  </div>
                </Form>
              </Card>
            </>
          )}
        </div>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
