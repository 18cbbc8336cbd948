import { exportCustomerData, exportFileName } from "~/models/account-data.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/account-export";

// The signed-in customer's own data as one JSON file to keep.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const [today, exported] = await Promise.all([businessToday(db), exportCustomerData(db, user.customerId)]);
  return new Response(JSON.stringify(exported, null, 2), {
    headers: {
      "Content-Type": "application/json; charset=utf-8",
      "Content-Disposition": `attachment; filename="${exportFileName(today)}"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
