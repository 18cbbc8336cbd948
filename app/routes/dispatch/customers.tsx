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
  await requireRole(request, AREA_ROLES.dispatch);
  const query = readTableQuery(new URL(request.url), CUSTOMER_SORTS, { sort: "name" });
  return { page: await listCustomers(db, { ...query, today: await businessToday(db) }) };
}

export default function DispatchCustomers({ loaderData }: Route.ComponentProps) {
  return (
    <CustomersTable
      page={loaderData.page}
      subtitle="Every customer with their yards, colonies, open balance and next visit."
      yardsHref={(customer) => `/dispatch/yards?q=${encodeURIComponent(customer.email)}`}
      actions={
        <a href="/api/customers.csv" download className={buttonClass("secondary")}>
          Download CSV
        </a>
      }
    />
  );
}
