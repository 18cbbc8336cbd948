import { formatServiceDate } from "~/components/format";
import { formatDollars } from "~/domain/billing";
import type { InvoiceDocument } from "~/models/invoice-documents.server";
import { PDF_COLOURS, startPdf } from "./pdf-document.server";

// The invoice as a PDF (pdfkit, Work Sans embedded: app/services/pdf-document.server.ts). One page for an ordinary invoice; long line lists
// continue on further pages. Amounts come from integer cents (formatDollars, no floats).

export type InvoicePdfOptions = {
  /** The pay link printed on the invoice; left out when null (e.g. a paid or void invoice). */
  payUrl?: string | null;
  /** Paper size; US Letter by default. */
  size?: "LETTER" | "A4";
};

const { ink: INK, inkSoft: INK_SOFT, line: LINE, pine: PINE, pine50: PINE_50 } = PDF_COLOURS;

const STATUS_STAMP: Partial<Record<InvoiceDocument["status"], string>> = { paid: "PAID", void: "VOID", refunded: "REFUNDED" };

function quantityText(quantity: number): string {
  return Number.isInteger(quantity) ? String(quantity) : quantity.toFixed(2);
}

/** Renders the invoice PDF. */
export function renderInvoicePdf(invoice: InvoiceDocument, options: InvoicePdfOptions = {}): Promise<Buffer> {
  const { doc, bytes: done } = startPdf({
    size: options.size ?? "LETTER",
    info: { Title: `Invoice ${invoice.number}`, Author: invoice.businessName, Subject: `Invoice ${invoice.number} for ${invoice.customer.name}` },
  });

  const left = doc.page.margins.left;
  const right = doc.page.width - doc.page.margins.right;
  const width = right - left;
  const bottom = () => doc.page.height - doc.page.margins.bottom;

  // Header: the business, then "Invoice <number>" on the right.
  doc.font("bold").fontSize(22).fillColor(PINE).text(invoice.businessName, left, 54, { width: width / 2 });
  doc.font("regular").fontSize(10).fillColor(INK_SOFT);
  for (const line of invoice.businessAddressLines) doc.text(line, left, doc.y + 1, { width: width / 2 });
  doc.text("Varroa treatment with oxalic acid vapor", left, doc.y + 2, { width: width / 2 });
  doc.font("bold").fontSize(20).fillColor(INK).text("Invoice", left + width / 2, 54, { width: width / 2, align: "right" });
  doc.font("semibold").fontSize(12).text(invoice.number, left + width / 2, doc.y + 2, { width: width / 2, align: "right" });
  const stamp = STATUS_STAMP[invoice.status];
  if (stamp) doc.font("bold").fontSize(12).fillColor(PINE).text(stamp, left + width / 2, doc.y + 2, { width: width / 2, align: "right" });

  // Bill to, and the dates.
  let y = 140;
  doc.font("semibold").fontSize(9).fillColor(INK_SOFT).text("BILL TO", left, y);
  doc.font("regular").fontSize(11).fillColor(INK).text(invoice.customer.name, left, doc.y + 3, { width: width / 2 - 12 });
  for (const line of invoice.customer.addressLines) doc.text(line, { width: width / 2 - 12 });
  if (invoice.customer.email) doc.fillColor(INK_SOFT).text(invoice.customer.email, { width: width / 2 - 12 });
  const billBottom = doc.y;

  const facts: [string, string][] = [
    ["Invoice number", invoice.number],
    ["Issued", formatServiceDate(invoice.issuedOn)],
    ["Due", formatServiceDate(invoice.dueOn)],
  ];
  if (invoice.visit) {
    facts.push(["Service date", formatServiceDate(invoice.visit.serviceDate)], ["Yard", invoice.visit.yardName]);
    if (invoice.visit.roundsPlanned > 1) facts.push(["Round", `${invoice.visit.roundNumber} of ${invoice.visit.roundsPlanned}`]);
  }
  const factsX = left + width / 2 + 12;
  const labelWidth = 90;
  doc.y = y;
  for (const [label, value] of facts) {
    const rowY = doc.y;
    doc.font("semibold").fontSize(9).fillColor(INK_SOFT).text(label.toUpperCase(), factsX, rowY + 1.5, { width: labelWidth });
    doc.font("regular").fontSize(11).fillColor(INK).text(value, factsX + labelWidth, rowY, { width: right - factsX - labelWidth });
    doc.y = Math.max(doc.y, rowY + 14) + 3;
  }
  y = Math.max(billBottom, doc.y) + 24;

  // The lines.
  const cols = { qty: 56, unit: 84, amount: 92 };
  const descWidth = width - cols.qty - cols.unit - cols.amount - 16;
  const xQty = left + descWidth + 16;
  const xUnit = xQty + cols.qty;
  const xAmount = xUnit + cols.unit;
  const header = () => {
    doc.rect(left, y, width, 22).fill(PINE_50);
    doc.font("semibold").fontSize(9).fillColor(INK_SOFT);
    doc.text("DESCRIPTION", left + 8, y + 7, { width: descWidth - 8 });
    doc.text("QTY", xQty, y + 7, { width: cols.qty - 8, align: "right" });
    doc.text("UNIT PRICE", xUnit, y + 7, { width: cols.unit - 8, align: "right" });
    doc.text("AMOUNT", xAmount, y + 7, { width: cols.amount - 8, align: "right" });
    y += 28;
  };
  header();
  doc.font("regular").fontSize(10.5).fillColor(INK);
  if (invoice.lines.length === 0) {
    doc.fillColor(INK_SOFT).text("No charges.", left + 8, y, { width: descWidth - 8 });
    y = doc.y + 8;
  }
  for (const line of invoice.lines) {
    doc.font("regular").fontSize(10.5);
    const height = Math.max(doc.heightOfString(line.description, { width: descWidth - 8 }), 14);
    if (y + height + 10 > bottom()) {
      doc.addPage();
      y = doc.page.margins.top;
      header();
      doc.font("regular").fontSize(10.5);
    }
    doc.fillColor(INK).text(line.description, left + 8, y, { width: descWidth - 8 });
    doc.text(quantityText(line.quantity), xQty, y, { width: cols.qty - 8, align: "right" });
    doc.text(formatDollars(line.unitCents), xUnit, y, { width: cols.unit - 8, align: "right" });
    doc.text(formatDollars(line.amountCents), xAmount, y, { width: cols.amount - 8, align: "right" });
    y += height + 6;
    doc.moveTo(left, y).lineTo(right, y).lineWidth(0.5).strokeColor(LINE).stroke();
    y += 6;
  }

  // Totals.
  const totals: [string, string, boolean][] = [
    ["Subtotal", formatDollars(invoice.subtotalCents), false],
    ["Tax", formatDollars(invoice.taxCents), false],
    ["Total", formatDollars(invoice.totalCents), true],
  ];
  if (invoice.paidCents > 0) totals.push(["Paid", `−${formatDollars(invoice.paidCents)}`, false]);
  totals.push(["Balance due", formatDollars(invoice.balanceCents), true]);
  if (y + totals.length * 20 + 140 > bottom()) {
    doc.addPage();
    y = doc.page.margins.top;
  }
  y += 4;
  const totalsLabelX = xUnit - 60;
  for (const [label, value, strong] of totals) {
    doc.font(strong ? "bold" : "regular").fontSize(strong ? 12 : 10.5).fillColor(INK);
    doc.text(label, totalsLabelX, y, { width: cols.unit + 60 - 8, align: "right" });
    doc.text(value, xAmount, y, { width: cols.amount - 8, align: "right" });
    y += strong ? 20 : 17;
  }

  // How to pay.
  y += 16;
  doc.moveTo(left, y).lineTo(right, y).lineWidth(0.5).strokeColor(LINE).stroke();
  y += 14;
  doc.font("semibold").fontSize(11).fillColor(INK).text("Payment terms", left, y, { width });
  const terms =
    invoice.paymentTermsDays > 0
      ? `Payment is due within ${invoice.paymentTermsDays} ${invoice.paymentTermsDays === 1 ? "day" : "days"} of the invoice date, by ${formatServiceDate(invoice.dueOn)}.`
      : `Payment is due on receipt (${formatServiceDate(invoice.dueOn)}).`;
  doc.font("regular").fontSize(10).fillColor(INK).text(terms, left, doc.y + 3, { width });
  doc.text(`Please quote invoice number ${invoice.number} with any payment by cheque or in cash.`, { width });
  if (options.payUrl && invoice.balanceCents > 0 && invoice.status === "open") {
    doc.moveDown(0.6);
    doc.font("semibold").fontSize(11).text("Pay online by card", { width });
    doc.font("regular").fontSize(8.5).fillColor(PINE).text(options.payUrl, { width, link: options.payUrl, underline: true });
  }
  if (invoice.visit) {
    doc.moveDown(0.8);
    doc.font("regular").fontSize(9).fillColor(INK_SOFT).text(
      `Charged per colony treated at ${invoice.visit.yardName} on ${formatServiceDate(invoice.visit.serviceDate)}, as recorded by the crew at the hives.`,
      { width },
    );
  }

  doc.end();
  return done;
}
