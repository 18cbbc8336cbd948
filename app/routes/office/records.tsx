import type { ReactNode } from "react";
import { Form, Link, useLocation } from "react-router";
import { Pager } from "~/components/data-table/pager";
import { SortableHeader } from "~/components/data-table/sortable-header";
import { formatClock, formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button, buttonClass } from "~/components/ui/button";
import { PageHeader } from "~/components/ui/card";
import { Table, Td } from "~/components/ui/table";
import { RECORD_KEEPING_NOTICE, gramsText, type ApplicationRecordLine } from "~/domain/application-records-csv";
import { applicationRecords, readRecordQuery, recordFiltersSearch } from "~/models/application-records.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/records";

export const meta: Route.MetaFunction = () => [{ title: "Application records · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const query = await readRecordQuery(db, new URL(request.url).searchParams, await businessToday(db));
  if (!query.ok) return { ok: false as const, errors: query.errors, values: query.values, options: query.options };
  const records = await applicationRecords(db, query.filters, query.paging);
  return { ok: true as const, errors: {}, values: query.values, options: query.options, records, downloadSearch: recordFiltersSearch(query.filters) };
}

const inputStyle = "min-h-11 rounded-lg border-2 bg-card px-2 text-base focus:border-pine-600";

/** A labelled filter with its message under it (tied by aria-describedby). */
function FilterField({
  name,
  label,
  error,
  children,
}: {
  name: string;
  label: string;
  error?: string;
  children: (props: { id: string; "aria-invalid"?: true; "aria-describedby"?: string; className: string }) => ReactNode;
}) {
  const id = `records-${name}`;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-semibold">
        {label}
      </label>
      {children({
        id,
        "aria-invalid": error ? true : undefined,
        "aria-describedby": error ? `${id}-error` : undefined,
        className: `${inputStyle} ${error ? "border-alarm-700" : "border-line"}`,
      })}
      {error ? (
        <p id={`${id}-error`} className="max-w-56 text-sm font-semibold text-alarm-700">
          <span aria-hidden="true">⚠ </span>
          {error}
        </p>
      ) : null}
    </div>
  );
}

function Applicators({ row }: { row: ApplicationRecordLine }) {
  if (row.applicators.length === 0) return <span className="text-ink-soft">Not recorded</span>;
  return (
    <ul>
      {row.applicators.map((a, i) => (
        <li key={`${a.name}-${i}`}>
          {a.name},{" "}
          {a.licence ? (
            <span className="whitespace-nowrap">licence {a.licence}</span>
          ) : (
            <span className="font-semibold text-alarm-700">no licence number on file</span>
          )}
        </li>
      ))}
    </ul>
  );
}

export default function OfficeRecords({ loaderData }: Route.ComponentProps) {
  const { values, options } = loaderData;
  const errors: Partial<Record<string, string>> = loaderData.errors;
  const location = useLocation();
  const params = new URLSearchParams(location.search);
  const kept = ["sort", "dir", "size"].flatMap((key) => (params.has(key) ? [[key, params.get(key)!] as const] : []));
  const records = loaderData.ok ? loaderData.records : null;
  const paging = records?.paging;
  const filtered = ["from", "to", "crew", "customer"].some((key) => (params.get(key) ?? "") !== "");

  const header = (column: string, label: string, align: "left" | "right" = "left") =>
    paging ? (
      <SortableHeader
        column={column}
        label={label}
        sort={paging.sort}
        dir={paging.dir}
        align={align}
        firstDir={column === "date" || align === "right" ? "desc" : "asc"}
      />
    ) : null;

  return (
    <>
      <PageHeader
        title="Application records"
        subtitle="One line per finished visit: when and where the crew treated, how many colonies, how much oxalic acid dihydrate, and who applied it."
        actions={
          loaderData.ok ? (
            <>
              <a href={`/office/records/csv?${loaderData.downloadSearch}`} download className={buttonClass("secondary")}>
                Download CSV
              </a>
              <a href={`/office/records/pdf?${loaderData.downloadSearch}`} download className={buttonClass("secondary")}>
                Download PDF
              </a>
            </>
          ) : null
        }
      />

      <section aria-labelledby="record-keeping-title" className="mb-5 rounded-xl border-2 border-pine-600 bg-pine-50 p-4 text-pine-900">
        <h2 id="record-keeping-title" className="text-lg font-bold">
          {RECORD_KEEPING_NOTICE.title}
        </h2>
        <p className="mt-1">{RECORD_KEEPING_NOTICE.text}</p>
      </section>

      <Form method="get" action={location.pathname} role="search" aria-label="Filter application records" className="mb-4 flex flex-wrap items-start gap-3" noValidate>
        {kept.map(([key, value]) => (
          <input key={key} type="hidden" name={key} value={value} />
        ))}
        <FilterField name="from" label="From" error={errors.from}>
          {(props) => <input {...props} type="date" name="from" defaultValue={values.from} key={`from-${values.from}`} />}
        </FilterField>
        <FilterField name="to" label="To" error={errors.to}>
          {(props) => <input {...props} type="date" name="to" defaultValue={values.to} key={`to-${values.to}`} />}
        </FilterField>
        <FilterField name="crew" label="Crew" error={errors.crew}>
          {(props) => (
            <select {...props} name="crew" defaultValue={values.crew} key={`crew-${values.crew}`}>
              <option value="">All crews</option>
              {options.crews.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}
                </option>
              ))}
            </select>
          )}
        </FilterField>
        <FilterField name="customer" label="Customer" error={errors.customer}>
          {(props) => (
            <select {...props} name="customer" defaultValue={values.customer} key={`customer-${values.customer}`}>
              <option value="">All customers</option>
              {options.customers.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}
                </option>
              ))}
            </select>
          )}
        </FilterField>
        <div className="flex items-end gap-3 self-end">
          <Button type="submit">Show records</Button>
          {filtered ? (
            <Link to={location.pathname} className="inline-flex min-h-11 items-center px-2 font-semibold text-pine-800 underline underline-offset-4">
              Clear
            </Link>
          ) : null}
        </div>
      </Form>

      {records && paging ? (
        <>
          <p className="mb-3 text-ink-soft">
            {records.filters.from} to {records.filters.to}, both days included. Product: <span className="font-semibold text-ink">{records.productName}</span>,
            registration number <span className="font-semibold text-ink">{records.productRegistrationNumber}</span> (from settings). Times in {records.timeZone}.
            Colonies and grams are counted from the crew's tallies.
          </p>
          <Table
            caption={`Application records from ${records.filters.from} to ${records.filters.to}`}
            empty="No finished visits in this period match these filters."
            head={
              <>
                {header("date", "Date")}
                {header("customer", "Customer")}
                {header("yard", "Yard")}
                {header("crew", "Applicator and crew")}
                {header("colonies", "Colonies treated", "right")}
                {header("grams", "Grams applied", "right")}
                <th scope="col" className="px-3 py-2 font-semibold whitespace-nowrap">
                  Weather
                </th>
              </>
            }
            foot={
              <tr>
                <th scope="row" colSpan={4} className="px-3 py-2 text-left">
                  Totals: {records.totals.visits.toLocaleString("en-US")} {records.totals.visits === 1 ? "visit" : "visits"}
                </th>
                <Td align="right">{records.totals.colonies.toLocaleString("en-US")}</Td>
                <Td align="right">{gramsText(records.totals.grams)} g</Td>
                <Td>
                  <span className="sr-only">No total</span>
                </Td>
              </tr>
            }
          >
            {records.rows.map((row) => (
              <tr key={row.visitId} className="align-top">
                <Td className="whitespace-nowrap">
                  <span className="font-semibold">{formatServiceDate(row.serviceDate)}</span>
                  <br />
                  <span className="text-ink-soft">
                    {row.startedAt ? formatClock(row.startedAt, row.timeZone) : "?"}–{row.finishedAt ? formatClock(row.finishedAt, row.timeZone) : "?"}
                  </span>
                </Td>
                <Td>
                  {row.customerName}
                  {row.customerAnonymised ? <span className="text-ink-soft"> (account deleted)</span> : null}
                  {row.customerAddress ? (
                    <>
                      <br />
                      <span className="text-sm text-ink-soft">{row.customerAddress}</span>
                    </>
                  ) : null}
                </Td>
                <Td>
                  {row.yardName}
                  <br />
                  <span className="text-sm text-ink-soft">
                    {row.yardAddress ? (
                      <>
                        {row.yardAddress}
                        <br />
                      </>
                    ) : null}
                    <span className="whitespace-nowrap">
                      {row.lat.toFixed(5)}, {row.lng.toFixed(5)}
                    </span>
                  </span>
                </Td>
                <Td>
                  <Applicators row={row} />
                  {row.crewName ? <span className="text-sm text-ink-soft">{row.crewName}</span> : null}
                </Td>
                <Td align="right">
                  {row.coloniesTreated}
                  {row.coloniesSkipped ? (
                    <>
                      <br />
                      <span className="text-sm whitespace-nowrap text-ink-soft">{row.coloniesSkipped} skipped</span>
                    </>
                  ) : null}
                </Td>
                <Td align="right">{gramsText(row.gramsApplied)}</Td>
                <Td className="text-sm">{row.weatherNote ?? <span className="text-ink-soft">None entered</span>}</Td>
              </tr>
            ))}
          </Table>
          <Pager page={paging.page} pageSize={paging.pageSize} total={records.totals.visits} noun="records" />
        </>
      ) : (
        <p role="status" className="rounded-lg border-2 border-line bg-card px-4 py-3">
          Correct the filters above to see the records.
        </p>
      )}

      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
