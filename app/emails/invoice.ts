import { formatServiceDate } from "~/components/format";
import { formatDollars } from "~/domain/billing";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// The invoice e-mail a customer gets after a finished visit: the invoice's number, dates and
// total, the visit it charges for, and the pay link; the PDF goes along as an attachment
// (app/models/invoice-mail.server.ts). Pure: values are passed raw; the layout escapes them
// and appends the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

export type InvoiceEmailInput = {
  customerName: string;
  number: string;
  issuedOn: string;
  dueOn: string;
  totalCents: number;
  /** The visit charged for; null for an invoice without a visit. */
  yardName: string | null;
  serviceDate: string | null;
  coloniesTreated: number;
  /** The signed pay link; null leaves the pay button out. */
  payUrl: string | null;
};

function coloniesText(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

/** Sent to the customer with the invoice PDF attached. */
export function invoiceEmail(input: InvoiceEmailInput): EmailContent {
  const name = input.customerName.trim();
  const total = formatDollars(input.totalCents);
  const due = formatServiceDate(input.dueOn);
  const visitText =
    input.yardName && input.serviceDate
      ? `for the Varroa treatment at ${input.yardName} on ${formatServiceDate(input.serviceDate)} (${coloniesText(input.coloniesTreated)} treated)`
      : "for your Varroa treatment";
  const rows: [string, string][] = [
    ["Invoice", input.number],
    ["Issued", formatServiceDate(input.issuedOn)],
    ["Due", due],
  ];
  if (input.yardName) rows.push(["Yard", input.yardName]);
  if (input.serviceDate) rows.push(["Service date", formatServiceDate(input.serviceDate)]);
  rows.push(["Colonies treated", String(input.coloniesTreated)], ["Total", total]);

  const blocks: EmailBlock[] = [
    { kind: "paragraph", text: name ? `Hello ${name},` : "Hello," },
    { kind: "paragraph", text: `Here is invoice ${input.number} ${visitText}. The invoice is attached as a PDF.` },
    { kind: "details", rows },
    { kind: "paragraph", text: `Please pay ${total} by ${due}.`, strong: true },
  ];
  if (input.payUrl) {
    blocks.push(
      { kind: "button", label: `Pay ${total} online`, href: input.payUrl },
      { kind: "paragraph", text: "The pay link is personal to this invoice; it works without signing in. You can also pay by cheque or in cash, quoting the invoice number." },
    );
  } else {
    blocks.push({ kind: "paragraph", text: "You can pay by cheque or in cash, quoting the invoice number." });
  }
  return renderEmail({
    subject: `Invoice ${input.number}: ${total}, due ${due}`,
    preheader: input.yardName ? `${coloniesText(input.coloniesTreated)} treated at ${input.yardName}` : `Invoice ${input.number}`,
    title: `Invoice ${input.number}`,
    blocks,
  });
}
