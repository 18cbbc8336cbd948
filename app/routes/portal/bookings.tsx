import { Link } from "react-router";
import { formatServiceDate, timePreferenceName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import { scheduledVisitsByBooking } from "~/models/booking-changes.server";
import { bookingsForCustomer } from "~/models/visits.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/bookings";

export const meta: Route.MetaFunction = () => [{ title: "My bookings · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const today = await businessToday(db);
  const [bookings, changeable] = await Promise.all([bookingsForCustomer(db, user.customerId), scheduledVisitsByBooking(db, user.customerId, today)]);
  const query = new URL(request.url).searchParams;
  const date = (name: string) => {
    const value = query.get(name);
    return value && isCalendarDate(value) ? value : null;
  };
  return { bookings, changeable, booked: date("booked"), moved: date("moved"), cancelled: date("cancelled") };
}

const STATUS: Record<string, string> = { requested: "Requested", confirmed: "Confirmed", cancelled: "Cancelled", completed: "Completed" };

export default function Bookings({ loaderData }: Route.ComponentProps) {
  const { bookings, changeable, booked, moved, cancelled } = loaderData;
  return (
    <>
      <PageHeader
        title="My bookings"
        subtitle="Each booking starts a course: one round for a broodless yard, more a week or so apart where there is brood."
        actions={
          <Link to="/portal/book" className={buttonClass("primary")}>
            Book a treatment
          </Link>
        }
      />
      {booked ? (
        <div className="mb-4">
          <FormMessage tone="info" message={`Booked for ${formatServiceDate(booked)}. A confirmation is on its way to your e-mail.`} />
        </div>
      ) : null}
      {moved ? (
        <div className="mb-4">
          <FormMessage tone="info" message={`Visit moved to ${formatServiceDate(moved)}. A confirmation is on its way to your e-mail, and our dispatcher has been told.`} />
        </div>
      ) : null}
      {cancelled ? (
        <div className="mb-4">
          <FormMessage tone="info" message={`Visit on ${formatServiceDate(cancelled)} cancelled. A confirmation is on its way to your e-mail, and our dispatcher has been told.`} />
        </div>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-3">
        <Card title="Bookings" className="min-w-0 lg:col-span-2">
          <Table
            caption="My bookings"
            empty="No bookings yet."
            head={
              <>
                <Th>Day</Th>
                <Th>Yard</Th>
                <Th align="right">Colonies</Th>
                <Th>Time</Th>
                <Th>Status</Th>
                <Th>Rounds</Th>
                <Th>Change</Th>
              </>
            }
          >
            {bookings.map((b) => (
              <tr key={b.id}>
                <Td>{formatServiceDate(b.serviceDate)}</Td>
                <Td>
                  <Link to={`/portal/yards/${b.yardId}`} className="font-semibold text-pine-800 underline">
                    {b.yardName}
                  </Link>
                </Td>
                <Td align="right">{b.colonies}</Td>
                <Td>{timePreferenceName(b.timePreference)}</Td>
                <Td>{STATUS[b.status] ?? b.status}</Td>
                <Td>
                  {b.roundsPlanned ? `${b.roundsDone} of ${b.roundsPlanned} done` : "—"}
                  {b.nextRoundDate ? <span className="block text-sm text-ink-soft">next {formatServiceDate(b.nextRoundDate, false)}</span> : null}
                </Td>
                <Td>
                  {(changeable[b.id] ?? []).map((v, _, all) => {
                    const label = all.length > 1 || v.roundNumber > 1 ? `Change or cancel round ${v.roundNumber}` : "Change or cancel";
                    return (
                      <Link
                        key={v.visitId}
                        to={`/portal/bookings/${v.visitId}/change`}
                        aria-label={`${label}: ${b.yardName}, ${formatServiceDate(v.serviceDate)}`}
                        className="block min-h-11 py-2 font-semibold text-pine-800 underline"
                      >
                        {label}
                      </Link>
                    );
                  })}
                </Td>
              </tr>
            ))}
          </Table>
        </Card>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
