import { exportCustomersCsv } from "~/models/customer-import.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/customers-csv";

/** Every customer's yards as CSV, in the columns the import takes (office, owner, dispatcher). */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, ["office", "owner", "dispatcher"]);
  const [csv, today] = await Promise.all([exportCustomersCsv(db), businessToday(db)]);
  // The byte-order mark tells spreadsheet programs the file is UTF-8.
  return new Response(`\uFEFF${csv}`, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="varroute-customers-${today}.csv"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
