import { Link } from "react-router";
import { formatServiceDate, timePreferenceName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import { bookingsForCustomer } from "~/models/visits.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/bookings";

export const meta: Route.MetaFunction = () => [{ title: "My bookings · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const bookings = await bookingsForCustomer(db, user.customerId);
  const booked = new URL(request.url).searchParams.get("booked");
  return { bookings, booked: booked && isCalendarDate(booked) ? booked : null };
}

const STATUS: Record<string, string> = { requested: "Requested", confirmed: "Confirmed", cancelled: "Cancelled", completed: "Completed" };

export default function Bookings({ loaderData }: Route.ComponentProps) {
  const { bookings, booked } = loaderData;
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
              </tr>
            ))}
          </Table>
        </Card>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
