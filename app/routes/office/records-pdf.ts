import { recordsFileName } from "~/domain/application-records-csv";
import { applicationRecords, readRecordQuery, recordFilterNames } from "~/models/application-records.server";
import { senderName } from "~/models/invoice-documents.server";
import { businessIdentity, loadBusinessSettings } from "~/models/settings.server";
import { renderApplicationRecordsPdf } from "~/services/application-records-pdf.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { mailFrom } from "~/services/mail.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/records-pdf";

/** The application records for the page's filters as a PDF report of the period. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const today = await businessToday(db);
  const query = await readRecordQuery(db, new URL(request.url).searchParams, today);
  if (!query.ok) {
    return new Response(`These filters cannot be used: ${Object.values(query.errors).join(" ")}`, {
      status: 400,
      headers: { "Content-Type": "text/plain; charset=utf-8", "Cache-Control": "private, no-store" },
    });
  }
  const records = await applicationRecords(db, query.filters);
  const pdf = await renderApplicationRecordsPdf({
    businessName: businessIdentity(await loadBusinessSettings(db), senderName(mailFrom())).name,
    period: { from: query.filters.from, to: query.filters.to },
    filterNames: recordFilterNames(query.filters, query.options),
    productName: records.productName,
    productRegistrationNumber: records.productRegistrationNumber,
    timeZone: records.timeZone,
    rows: records.rows,
    totals: records.totals,
    preparedOn: today,
  });
  return new Response(new Uint8Array(pdf), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `attachment; filename="${recordsFileName(query.filters, "pdf")}"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
