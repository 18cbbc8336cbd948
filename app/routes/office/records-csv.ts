import { recordsCsv, recordsFileName } from "~/domain/application-records-csv";
import { applicationRecords, readRecordQuery } from "~/models/application-records.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/records-csv";

/** The application records for the page's filters as CSV (UTF-8 with a byte-order mark). */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const query = await readRecordQuery(db, new URL(request.url).searchParams, await businessToday(db));
  if (!query.ok) {
    return new Response(`These filters cannot be used: ${Object.values(query.errors).join(" ")}`, {
      status: 400,
      headers: { "Content-Type": "text/plain; charset=utf-8", "Cache-Control": "private, no-store" },
    });
  }
  const records = await applicationRecords(db, query.filters);
  // The byte-order mark tells spreadsheet programs the file is UTF-8.
  return new Response(`\uFEFF${recordsCsv(records.rows)}`, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${recordsFileName(query.filters, "csv")}"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
