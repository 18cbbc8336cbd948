import type { ReactNode } from "react";
import { Link } from "react-router";
import { Pager } from "~/components/data-table/pager";
import { SearchForm } from "~/components/data-table/search-form";
import { SortableHeader } from "~/components/data-table/sortable-header";
import { formatCents, formatServiceDate } from "~/components/format";
import { PageHeader } from "~/components/ui/card";
import { Table, Td } from "~/components/ui/table";
import type { CustomerPage } from "~/models/customers.server";

const linkStyle = "inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4";

/**
 * The customers table shared by the office and the dispatcher: search, sortable columns,
 * pages and a totals row for everything the search found. `yardsHref` links a customer's
 * yard count to their yards where the viewer may see them.
 */
export function CustomersTable({
  page,
  actions,
  subtitle,
  yardsHref,
}: {
  page: CustomerPage;
  actions?: ReactNode;
  subtitle?: ReactNode;
  yardsHref?: (customer: CustomerPage["rows"][number]) => string;
}) {
  const header = (column: string, label: string, align: "left" | "right" = "left") => (
    <SortableHeader column={column} label={label} sort={page.sort} dir={page.dir} align={align} firstDir={align === "right" ? "desc" : "asc"} />
  );
  return (
    <>
      <PageHeader title="Customers" subtitle={subtitle} actions={actions} />
      <SearchForm
        label="Search customers"
        hint="Name, e-mail, phone, town or yard name"
        search={page.search}
        filtered={page.search !== ""}
      />
      <Table
        caption="Customers"
        empty={page.search ? `No customer matches “${page.search}”.` : "There are no customers yet."}
        head={
          <>
            {header("name", "Name")}
            {header("email", "E-mail")}
            {header("phone", "Phone")}
            {header("town", "Town")}
            {header("yards", "Yards", "right")}
            {header("colonies", "Colonies", "right")}
            {header("balance", "Open balance", "right")}
            {header("nextVisit", "Next visit")}
          </>
        }
        foot={
          <tr>
            <th scope="row" colSpan={4} className="px-3 py-2 text-left">
              Totals for {page.total.toLocaleString("en-US")} {page.total === 1 ? "customer" : "customers"}
              {page.search ? " found" : ""}
            </th>
            <Td align="right">{page.totals.yards.toLocaleString("en-US")}</Td>
            <Td align="right">{page.totals.colonies.toLocaleString("en-US")}</Td>
            <Td align="right">{formatCents(page.totals.openBalanceCents)}</Td>
            <Td>
              <span className="sr-only">No total</span>
            </Td>
          </tr>
        }
      >
        {page.rows.map((customer) => (
          <tr key={customer.id}>
            <Td className="font-semibold">{customer.name}</Td>
            <Td>
              <a href={`mailto:${customer.email}`} className={`${linkStyle} font-normal break-all`}>
                {customer.email}
              </a>
            </Td>
            <Td className="whitespace-nowrap">
              {customer.phone ? (
                <a href={`tel:${customer.phone.replace(/[^0-9+]/g, "")}`} className={`${linkStyle} font-normal`}>
                  {customer.phone}
                </a>
              ) : (
                <span className="text-ink-soft">—</span>
              )}
            </Td>
            <Td>{customer.town ?? <span className="text-ink-soft">—</span>}</Td>
            <Td align="right">
              {yardsHref && customer.yards > 0 ? (
                <Link to={yardsHref(customer)} className={`${linkStyle} justify-end`} aria-label={`${customer.yards} ${customer.yards === 1 ? "yard" : "yards"} of ${customer.name}`}>
                  {customer.yards}
                </Link>
              ) : (
                customer.yards
              )}
            </Td>
            <Td align="right">{customer.colonies}</Td>
            <Td align="right" className={customer.openBalanceCents > 0 ? "font-semibold" : "text-ink-soft"}>
              {formatCents(customer.openBalanceCents)}
            </Td>
            <Td className="whitespace-nowrap">{customer.nextVisitDate ? formatServiceDate(customer.nextVisitDate) : <span className="text-ink-soft">None booked</span>}</Td>
          </tr>
        ))}
      </Table>
      <Pager page={page.page} pageSize={page.pageSize} total={page.total} noun="customers" />
    </>
  );
}
