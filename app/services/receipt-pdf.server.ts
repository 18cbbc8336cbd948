import { formatInstant, formatServiceDate } from "~/components/format";
import { formatDollars } from "~/domain/billing";
import type { PortalInvoice } from "~/models/portal-invoices.server";
import { PDF_COLOURS, startPdf } from "./pdf-document.server";

// A receipt for the payments on one invoice (pdfkit), in the invoice PDF's look: Work Sans
// embedded from @fontsource/work-sans, Varroute's palette. It lists every payment (when, how,
// reference, amount) with any refunds under it, then what was received in all and what is
// still owed. Times are shown in the business's time zone with its abbreviation.

export type ReceiptPdfOptions = {
  /** The business's postal address lines, printed under its name (none when not known). */
  businessAddressLines?: readonly string[];
  /** When the receipt is made (printed on it); now by default. */
  now?: Date;
  size?: "LETTER" | "A4";
};

const { ink: INK, inkSoft: INK_SOFT, line: LINE, pine: PINE, pine50: PINE_50 } = PDF_COLOURS;

/** Intl output may hold narrow or no-break spaces; the embedded font subset has plain spaces only. */
function plain(text: string): string {
  return text.replace(/[\u00a0\u202f\u2009]/g, " ");
}

/** "America/New_York" → "New York". */
function placeName(timeZone: string): string {
  return (timeZone.split("/").pop() ?? timeZone).replace(/_/g, " ");
}

/** Renders the receipt PDF for an invoice with at least one payment. */
export function renderReceiptPdf(invoice: PortalInvoice, options: ReceiptPdfOptions = {}): Promise<Buffer> {
  const when = (instant: Date) => plain(formatInstant(instant, invoice.timeZone));
  const { doc, bytes: done } = startPdf({
    size: options.size ?? "LETTER",
    info: { Title: `Receipt for invoice ${invoice.number}`, Author: invoice.businessName, Subject: `Payments on invoice ${invoice.number} from ${invoice.customer.name}` },
  });

  const left = doc.page.margins.left;
  const right = doc.page.width - doc.page.margins.right;
  const width = right - left;
  const half = width / 2;
  const bottom = () => doc.page.height - doc.page.margins.bottom;

  // Header: the business on the left, "Receipt" and the invoice number on the right.
  doc.font("bold").fontSize(22).fillColor(PINE).text(invoice.businessName, left, 54, { width: half });
  doc.font("regular").fontSize(10).fillColor(INK_SOFT).text("Varroa treatment with oxalic acid vapor", left, doc.y + 2, { width: half });
  for (const line of options.businessAddressLines ?? []) doc.text(line, left, doc.y + 1, { width: half });
  const headerLeftBottom = doc.y;
  doc.font("bold").fontSize(20).fillColor(INK).text("Receipt", left + half, 54, { width: half, align: "right" });
  doc.font("semibold").fontSize(12).text(`Invoice ${invoice.number}`, left + half, doc.y + 2, { width: half, align: "right" });
  if (invoice.balanceCents === 0 && invoice.status === "paid") doc.font("bold").fontSize(12).fillColor(PINE).text("PAID IN FULL", left + half, doc.y + 2, { width: half, align: "right" });

  // Received from, and the facts.
  let y = Math.max(140, headerLeftBottom + 24, doc.y + 24);
  doc.font("semibold").fontSize(9).fillColor(INK_SOFT).text("RECEIVED FROM", left, y);
  doc.font("regular").fontSize(11).fillColor(INK).text(invoice.customer.name, left, doc.y + 3, { width: half - 12 });
  for (const line of invoice.customer.addressLines) doc.text(line, { width: half - 12 });
  if (invoice.customer.email) doc.fillColor(INK_SOFT).text(invoice.customer.email, { width: half - 12 });
  const fromBottom = doc.y;

  const facts: [string, string][] = [
    ["Invoice number", invoice.number],
    ["Invoice date", formatServiceDate(invoice.issuedOn)],
    ["Invoice total", formatDollars(invoice.totalCents)],
    ["Receipt date", when(options.now ?? new Date())],
  ];
  const factsX = left + half + 12;
  const labelWidth = 90;
  doc.y = y;
  for (const [label, value] of facts) {
    const rowY = doc.y;
    doc.font("semibold").fontSize(9).fillColor(INK_SOFT).text(label.toUpperCase(), factsX, rowY + 1.5, { width: labelWidth });
    doc.font("regular").fontSize(11).fillColor(INK).text(value, factsX + labelWidth, rowY, { width: right - factsX - labelWidth });
    doc.y = Math.max(doc.y, rowY + 14) + 3;
  }
  y = Math.max(fromBottom, doc.y) + 24;

  // The payments, each with its refunds under it.
  const cols = { date: 170, method: 100, amount: 92 };
  const xMethod = left + cols.date;
  const xReference = xMethod + cols.method;
  const referenceWidth = width - cols.date - cols.method - cols.amount;
  const xAmount = right - cols.amount;
  const header = () => {
    doc.rect(left, y, width, 22).fill(PINE_50);
    doc.font("semibold").fontSize(9).fillColor(INK_SOFT);
    doc.text("DATE", left + 8, y + 7, { width: cols.date - 8 });
    doc.text("METHOD", xMethod, y + 7, { width: cols.method - 8 });
    doc.text("REFERENCE", xReference, y + 7, { width: referenceWidth - 8 });
    doc.text("AMOUNT", xAmount, y + 7, { width: cols.amount - 8, align: "right" });
    y += 28;
  };
  const row = (cells: { date: string; method: string; reference: string; amount: string }, soft: boolean) => {
    doc.font("regular").fontSize(10.5);
    const height = Math.max(
      doc.heightOfString(cells.date, { width: cols.date - 8 }),
      doc.heightOfString(cells.reference, { width: referenceWidth - 8 }),
      14,
    );
    if (y + height + 10 > bottom()) {
      doc.addPage();
      y = doc.page.margins.top;
      header();
      doc.font("regular").fontSize(10.5);
    }
    doc.fillColor(soft ? INK_SOFT : INK);
    doc.text(cells.date, left + 8, y, { width: cols.date - 8 });
    doc.text(cells.method, xMethod, y, { width: cols.method - 8 });
    doc.text(cells.reference, xReference, y, { width: referenceWidth - 8 });
    doc.text(cells.amount, xAmount, y, { width: cols.amount - 8, align: "right" });
    y += height + 6;
  };
  header();
  for (const payment of invoice.payments) {
    row({ date: when(payment.receivedAt), method: payment.methodName, reference: payment.reference ?? "—", amount: formatDollars(payment.amountCents) }, false);
    for (const refund of payment.refunds) {
      row({ date: when(refund.createdAt), method: "Refund", reference: `Given back from the ${payment.methodName.toLowerCase()} payment`, amount: `−${formatDollars(refund.amountCents)}` }, true);
    }
    doc.moveTo(left, y).lineTo(right, y).lineWidth(0.5).strokeColor(LINE).stroke();
    y += 6;
  }

  // Totals.
  const totals: [string, string, boolean][] = [["Payments received", formatDollars(invoice.receivedCents), false]];
  if (invoice.refundedCents > 0) totals.push(["Refunded", `−${formatDollars(invoice.refundedCents)}`, false]);
  totals.push(["Total received", formatDollars(invoice.paidCents), true], ["Invoice total", formatDollars(invoice.totalCents), false], ["Balance still owed", formatDollars(invoice.balanceCents), true]);
  if (y + totals.length * 20 + 80 > bottom()) {
    doc.addPage();
    y = doc.page.margins.top;
  }
  y += 4;
  const labelX = xAmount - 200;
  for (const [label, value, strong] of totals) {
    doc.font(strong ? "bold" : "regular").fontSize(strong ? 12 : 10.5).fillColor(INK);
    doc.text(label, labelX, y, { width: 200 - 8, align: "right" });
    doc.text(value, xAmount, y, { width: cols.amount - 8, align: "right" });
    y += strong ? 20 : 17;
  }

  y += 16;
  doc.moveTo(left, y).lineTo(right, y).lineWidth(0.5).strokeColor(LINE).stroke();
  y += 14;
  const closing =
    invoice.balanceCents > 0
      ? `Thank you for your payment. ${formatDollars(invoice.balanceCents)} is still owed on invoice ${invoice.number}, due by ${formatServiceDate(invoice.dueOn)}.`
      : `Thank you for your payment. Nothing more is owed on invoice ${invoice.number}.`;
  doc.font("regular").fontSize(10).fillColor(INK).text(closing, left, y, { width });
  doc.font("regular").fontSize(9).fillColor(INK_SOFT).text(`Times are ${placeName(invoice.timeZone)} time.`, left, doc.y + 4, { width });

  doc.end();
  return done;
}
