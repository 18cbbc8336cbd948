import { data } from "react-router";
import { customerInvoice } from "~/models/portal-invoices.server";
import { db } from "~/services/db.server";
import { renderInvoicePdf } from "~/services/invoice-pdf.server";
import { payLinkUrl } from "~/services/pay-link.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/invoice-pdf";

// The customer's own invoice as a PDF, with the pay link on it while money is owed.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const invoice = await customerInvoice(db, user.customerId, idParam(params.invoiceId, "invoice"));
  if (!invoice) throw data("There is no such invoice in your account.", { status: 404 });
  const pdf = await renderInvoicePdf(invoice, { payUrl: invoice.payable ? payLinkUrl(invoice.invoiceId) : null });
  return new Response(new Uint8Array(pdf), {
    headers: {
      "Content-Type": "application/pdf",
      "Content-Disposition": `inline; filename="invoice-${invoice.number}.pdf"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
