import { data } from "react-router";
import { senderName } from "~/models/invoice-documents.server";
import { seasonReportForCustomer, seasonYearFromUrl } from "~/models/season-report.server";
import { businessIdentity, loadBusinessSettings } from "~/models/settings.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { mailFrom } from "~/services/mail.server";
import { requireCustomer } from "~/services/permissions.server";
import { renderSeasonReportPdf } from "~/services/season-report-pdf.server";
import type { Route } from "./+types/season-pdf";

// The season report of /portal/season as a PDF download, for the signed-in customer only.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  const year = seasonYearFromUrl(new URL(request.url), Number(today.slice(0, 4)));
  if (year === null) throw data("Choose a year between 2000 and 2100, for example 2026.", { status: 400 });
  const report = await seasonReportForCustomer(db, { customerId: user.customerId, year, today, settings });
  const pdf = await renderSeasonReportPdf(report, { businessName: businessIdentity(settings, senderName(mailFrom())).name });
  return new Response(new Uint8Array(pdf), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `attachment; filename="varroute-season-report-${year}.pdf"`,
      "Content-Length": String(pdf.byteLength),
      "Cache-Control": "private, no-store",
    },
  });
}
