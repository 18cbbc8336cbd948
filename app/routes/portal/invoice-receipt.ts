import { data } from "react-router";
import { customerInvoice } from "~/models/portal-invoices.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import { renderReceiptPdf } from "~/services/receipt-pdf.server";
import type { Route } from "./+types/invoice-receipt";

// A receipt (PDF) for the payments on one of the customer's own invoices; 404 before any payment.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const invoice = await customerInvoice(db, user.customerId, idParam(params.invoiceId, "invoice"));
  if (!invoice) throw data("There is no such invoice in your account.", { status: 404 });
  if (invoice.payments.length === 0) throw data("There is no payment on this invoice yet, so there is no receipt.", { status: 404 });
  const pdf = await renderReceiptPdf(invoice, { businessAddressLines: invoice.businessAddressLines });
  return new Response(new Uint8Array(pdf), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `inline; filename="receipt-${invoice.number}.pdf"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
