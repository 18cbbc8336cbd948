import { data } from "react-router";
import { invoiceDocument } from "~/models/invoice-documents.server";
import { renderInvoicePdf } from "~/services/invoice-pdf.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/invoice-pdf";

// The invoice as the customer receives it (PDF), for the office. No pay link on it.
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const doc = await invoiceDocument(db, idParam(params.invoiceId, "invoice"));
  if (!doc) throw data("There is no such invoice.", { status: 404 });
  const pdf = await renderInvoicePdf(doc, { payUrl: null });
  return new Response(new Uint8Array(pdf), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `inline; filename="invoice-${doc.number}.pdf"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
