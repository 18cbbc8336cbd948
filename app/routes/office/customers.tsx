import { Link } from "react-router";
import { CustomersTable } from "~/components/customers-table";
import { readTableQuery } from "~/components/data-table/query";
import { buttonClass } from "~/components/ui/button";
import { CUSTOMER_SORTS, listCustomers } from "~/models/customers.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/customers";

export const meta: Route.MetaFunction = () => [{ title: "Customers · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const query = readTableQuery(new URL(request.url), CUSTOMER_SORTS, { sort: "name" });
  return { page: await listCustomers(db, { ...query, today: await businessToday(db) }) };
}

export default function OfficeCustomers({ loaderData }: Route.ComponentProps) {
  return (
    <CustomersTable
      page={loaderData.page}
      subtitle="Keep customers and yards tidy: search, sort, import from a spreadsheet or download them all."
      actions={
        <>
          <Link to="/office/customers/import" className={buttonClass("primary")}>
            Import customers (CSV)
          </Link>
          <a href="/api/customers.csv" download className={buttonClass("secondary")}>
            Download CSV
          </a>
        </>
      }
    />
  );
}
