import { useId } from "react";
import { Link } from "react-router";
import { Pager } from "~/components/data-table/pager";
import { readTableQuery } from "~/components/data-table/query";
import { SearchForm } from "~/components/data-table/search-form";
import { SortableHeader } from "~/components/data-table/sortable-header";
import { broodStatusName, formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { buttonClass } from "~/components/ui/button";
import { PageHeader } from "~/components/ui/card";
import { Table, Td } from "~/components/ui/table";
import { listYards, YARD_SORTS, type YardBookingState } from "~/models/customers.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/yards";

export const meta: Route.MetaFunction = () => [{ title: "Yards · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const url = new URL(request.url);
  const query = readTableQuery(url, YARD_SORTS, { sort: "yard" });
  return { page: await listYards(db, { ...query, state: url.searchParams.get("state"), today: await businessToday(db) }) };
}

const STATE_NAMES: Record<YardBookingState, string> = {
  booked: "Booked",
  requested: "Requested",
  in_course: "In course",
  not_booked: "Nothing booked",
  never_booked: "Never booked",
};

const STATE_OPTIONS: { value: YardBookingState; label: string }[] = [
  { value: "booked", label: "Booked: a visit is scheduled" },
  { value: "requested", label: "Requested: not yet scheduled" },
  { value: "in_course", label: "In course: next round not booked" },
  { value: "not_booked", label: "Nothing booked now" },
  { value: "never_booked", label: "Never booked" },
];

const STATE_STYLE: Record<YardBookingState, string> = {
  booked: "border-pine-600 bg-pine-50 text-pine-900",
  requested: "border-ochre-500 bg-ochre-100 text-ochre-700",
  in_course: "border-ochre-500 bg-ochre-100 text-ochre-700",
  not_booked: "border-line bg-card text-ink-soft",
  never_booked: "border-line bg-paper text-ink-soft",
};

const linkStyle = "inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4";

export default function DispatchYards({ loaderData }: Route.ComponentProps) {
  const { page } = loaderData;
  const stateId = useId();
  const header = (column: string, label: string, align: "left" | "right" = "left") => (
    <SortableHeader column={column} label={label} sort={page.sort} dir={page.dir} align={align} firstDir={align === "right" ? "desc" : "asc"} />
  );
  const count = (n: number) => n.toLocaleString("en-US");
  return (
    <>
      <PageHeader
        title="Yards"
        subtitle="Every yard with its colonies, brood, supers and where it stands with bookings."
        actions={
          <a href="/api/customers.csv" download className={buttonClass("secondary")}>
            Download CSV
          </a>
        }
      />
      <SearchForm
        label="Search yards"
        hint="Yard, customer, e-mail, phone, town or address"
        search={page.search}
        filtered={page.search !== "" || page.state !== null}
        filterNames={["state"]}
      >
        <div className="flex flex-col gap-1">
          <label htmlFor={stateId} className="font-semibold">
            Booking
          </label>
          <select
            id={stateId}
            name="state"
            key={page.state ?? ""}
            defaultValue={page.state ?? ""}
            className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base"
          >
            <option value="">Any</option>
            {STATE_OPTIONS.map((option) => (
              <option key={option.value} value={option.value}>
                {option.label}
              </option>
            ))}
          </select>
        </div>
      </SearchForm>
      <Table
        caption="Yards"
        empty={page.search || page.state ? "No yard matches this search." : "There are no yards yet."}
        head={
          <>
            {header("yard", "Yard")}
            {header("customer", "Customer")}
            {header("town", "Town / address")}
            {header("colonies", "Colonies", "right")}
            {header("brood", "Brood")}
            {header("supersOff", "Supers off")}
            {header("state", "Booking")}
            {header("nextVisit", "Next visit")}
          </>
        }
        foot={
          <tr>
            <th scope="row" colSpan={3} className="px-3 py-2 text-left">
              Totals for {count(page.total)} {page.total === 1 ? "yard" : "yards"}
              {page.search || page.state ? " found" : ""}
            </th>
            <Td align="right">{count(page.totals.colonies)}</Td>
            <Td>{count(page.totals.broodYards)} with brood</Td>
            <Td>{count(page.totals.supersOffYards)} off</Td>
            <Td>{count(page.totals.bookedYards)} booked</Td>
            <Td>
              <span className="sr-only">No total</span>
            </Td>
          </tr>
        }
      >
        {page.rows.map((yard) => (
          <tr key={yard.id}>
            <Td>
              <Link to={`/dispatch/yards/${yard.id}`} className={linkStyle}>
                {yard.name}
              </Link>
            </Td>
            <Td>
              <Link to={`/dispatch/customers?q=${encodeURIComponent(yard.customerEmail)}`} className={`${linkStyle} font-normal`}>
                {yard.customerName}
              </Link>
            </Td>
            <Td>{yard.address ?? yard.town ?? <span className="text-ink-soft">—</span>}</Td>
            <Td align="right">{yard.colonies}</Td>
            <Td className="whitespace-nowrap">{broodStatusName(yard.broodStatus)}</Td>
            <Td>{yard.supersOff ? "Yes" : <span className="font-semibold text-ochre-700">Not confirmed</span>}</Td>
            <Td className="whitespace-nowrap">
              <span className={`inline-block rounded-full border px-2 py-0.5 text-sm font-semibold ${STATE_STYLE[yard.bookingState]}`}>
                {STATE_NAMES[yard.bookingState]}
              </span>
              {yard.bookingState === "requested" && yard.requestedDate ? (
                <span className="block text-sm text-ink-soft">for {formatServiceDate(yard.requestedDate, false)}</span>
              ) : null}
            </Td>
            <Td className="whitespace-nowrap">{yard.nextVisitDate ? formatServiceDate(yard.nextVisitDate) : <span className="text-ink-soft">—</span>}</Td>
          </tr>
        ))}
      </Table>
      <Pager page={page.page} pageSize={page.pageSize} total={page.total} noun="yards" />
      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
