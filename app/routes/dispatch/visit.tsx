import { data, Form, Link, useNavigation } from "react-router";
import { formatServiceDate, timePreferenceName, visitStatusName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { visitChangeSchema } from "~/forms/visit-change";
import { cancelVisit, changeVisitTimeOfDay, rescheduleVisit, VisitChangeRefused } from "~/models/visit-changes.server";
import { getVisitDetail } from "~/models/visits.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/visit";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Visit to ${data?.visit.yardName ?? "a yard"} · Varroute` }];

async function loadVisit(visitId: string) {
  const visit = await getVisitDetail(db, idParam(visitId, "visit"));
  if (!visit) throw data("There is no visit with that number.", { status: 404 });
  return visit;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  return { visit: await loadVisit(params.visitId), changed: new URL(request.url).searchParams.get("changed") };
}

/** Move or cancel a visit. Answers JSON-ish data for the calendar's drag (fetcher) and the forms here. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const visit = await loadVisit(params.visitId);
  const values = formValues(await readForm(request));
  const parsed = visitChangeSchema.safeParse(values);
  if (!parsed.success) return data({ ok: false as const, errors: fieldErrors(parsed.error), intent: String(values.intent ?? "") }, { status: 400 });
  let takenOffRun = false;
  try {
    if (parsed.data.intent === "reschedule") {
      await rescheduleVisit(db, { visitId: visit.id, toDate: parsed.data.toDate, reason: parsed.data.reason, actorUserId: user.id });
    } else if (parsed.data.intent === "time") {
      ({ takenOffRun } = await changeVisitTimeOfDay(db, { visitId: visit.id, timePreference: parsed.data.timePreference, actorUserId: user.id }));
    } else {
      await cancelVisit(db, { visitId: visit.id, reason: parsed.data.reason, actorUserId: user.id });
    }
  } catch (error) {
    if (error instanceof VisitChangeRefused) {
      return data({ ok: false as const, errors: { [error.field]: error.message } as FieldErrors, intent: parsed.data.intent }, { status: 409 });
    }
    throw error;
  }
  return { ok: true as const, errors: {} as FieldErrors, intent: parsed.data.intent, takenOffRun };
}

export default function VisitPage({ loaderData, actionData }: Route.ComponentProps) {
  const { visit } = loaderData;
  const busy = useNavigation().state === "submitting";
  const errors = actionData && !actionData.ok ? actionData.errors : {};
  const open = visit.status === "scheduled" || visit.status === "deferred";
  return (
    <>
      <Link to="/dispatch/calendar" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Calendar
      </Link>
      <PageHeader
        title={`${visit.yardName}, ${formatServiceDate(visit.serviceDate)}`}
        subtitle={`${visit.customerName} · round ${visit.roundNumber} of ${visit.roundsPlanned} · ${visit.colonies} colonies · ${visitStatusName(visit.status)}`}
      />
      {actionData?.ok ? (
        <div className="mb-4">
          <FormMessage
            tone="info"
            message={
              actionData.intent === "cancel"
                ? "Visit cancelled; the customer is being e-mailed."
                : actionData.intent === "time"
                  ? `Time of day changed.${actionData.takenOffRun ? " The visit was taken off its run: plan the day again." : ""}`
                  : "Visit moved; the customer is being e-mailed."
            }
          />
        </div>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <Card title="Visit">
            <dl className="grid gap-3 sm:grid-cols-2">
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Customer</dt>
                <dd>
                  {visit.customerName}
                  <br />
                  <a className="text-pine-800 underline" href={`mailto:${visit.customerEmail}`}>
                    {visit.customerEmail}
                  </a>
                  {visit.customerPhone ? <span className="block">{visit.customerPhone}</span> : null}
                </dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Yard</dt>
                <dd>
                  <Link to={`/dispatch/yards/${visit.yardId}`} className="font-semibold text-pine-800 underline">
                    {visit.yardName}
                  </Link>
                  {visit.address ? <span className="block">{visit.address}</span> : null}
                </dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Time of day</dt>
                <dd>{timePreferenceName(visit.timePreference)}</dd>
              </div>
              <div>
                <dt className="text-sm font-semibold text-ink-soft">Crew</dt>
                <dd>{visit.crewName ?? "Not on a run yet"}</dd>
              </div>
              <div className="sm:col-span-2">
                <dt className="text-sm font-semibold text-ink-soft">Access notes</dt>
                <dd className="whitespace-pre-line">{visit.accessNotes || "None"}</dd>
              </div>
              {visit.deferReason ? (
                <div className="sm:col-span-2">
                  <dt className="text-sm font-semibold text-ink-soft">Deferred because</dt>
                  <dd>{visit.deferReason}</dd>
                </div>
              ) : null}
            </dl>
          </Card>
          {open ? (
            <>
              <Card title="Move to another day">
                <Form method="post" noValidate className="flex flex-col gap-3">
                  <input type="hidden" name="intent" value="reschedule" />
                  <div className="flex flex-col gap-1">
                    <label htmlFor="toDate" className="font-semibold">
                      New day
                    </label>
                    <input id="toDate" name="toDate" type="date" required aria-invalid={errors.toDate ? true : undefined} aria-describedby={errors.toDate ? "toDate-error" : undefined} className="min-h-11 max-w-xs rounded-lg border-2 border-line bg-card px-3" />
                    {errors.toDate ? (
                      <p id="toDate-error" className="font-semibold text-alarm-700">
                        {errors.toDate}
                      </p>
                    ) : null}
                  </div>
                  <div className="flex flex-col gap-1">
                    <label htmlFor="moveReason" className="font-semibold">
                      Reason for the customer (optional)
                    </label>
                    <input id="moveReason" name="reason" className="min-h-11 rounded-lg border-2 border-line bg-card px-3" />
                  </div>
                  <div>
                    <Button type="submit" disabled={busy}>
                      Move the visit
                    </Button>
                  </div>
                </Form>
              </Card>
              <Card title="Change the time of day">
                <Form method="post" noValidate className="flex flex-col gap-3">
                  <input type="hidden" name="intent" value="time" />
                  <div className="flex flex-col gap-1">
                    <label htmlFor="timePreference" className="font-semibold">
                      Time of day
                    </label>
                    <select
                      id="timePreference"
                      name="timePreference"
                      defaultValue={visit.timePreference}
                      key={visit.timePreference}
                      aria-invalid={errors.timePreference ? true : undefined}
                      aria-describedby={errors.timePreference ? "time-error" : "time-hint"}
                      className="min-h-11 max-w-xs rounded-lg border-2 border-line bg-card px-3"
                    >
                      <option value="any">{timePreferenceName("any")}</option>
                      <option value="morning">{timePreferenceName("morning")}</option>
                      <option value="afternoon">{timePreferenceName("afternoon")}</option>
                    </select>
                    {errors.timePreference ? (
                      <p id="time-error" className="font-semibold text-alarm-700">
                        {errors.timePreference}
                      </p>
                    ) : (
                      <p id="time-hint" className="text-sm text-ink-soft">
                        A visit already on a run is taken off it, so the day is planned again.
                      </p>
                    )}
                  </div>
                  <div>
                    <Button type="submit" variant="secondary" disabled={busy}>
                      Change the time of day
                    </Button>
                  </div>
                </Form>
              </Card>
              <Card title="Cancel the visit">
                <Form method="post" noValidate className="flex flex-col gap-3">
                  <p className="text-ink-soft">
                    This ends the yard's course: no later round is booked after it. To treat later, move the visit instead, or the customer books again.
                  </p>
                  <input type="hidden" name="intent" value="cancel" />
                  <div className="flex flex-col gap-1">
                    <label htmlFor="cancelReason" className="font-semibold">
                      Reason (sent to the customer)
                    </label>
                    <input id="cancelReason" name="reason" required aria-invalid={errors.reason ? true : undefined} aria-describedby={errors.reason ? "cancel-error" : undefined} className="min-h-11 rounded-lg border-2 border-line bg-card px-3" />
                    {errors.reason ? (
                      <p id="cancel-error" className="font-semibold text-alarm-700">
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
          ) : null}
          <FormMessage message={errors.form} />
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
