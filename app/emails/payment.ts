import { formatServiceDate } from "~/components/format";
import { formatDollars } from "~/domain/billing";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// Billing e-mails after the invoice: the receipt for a payment received, and the reminder
// for an invoice past its due date. Pure: values are passed raw; the layout escapes them and
// appends the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

export type PaymentMethod = "card" | "cash" | "cheque";

const METHOD_NAMES: Record<PaymentMethod, string> = { card: "Card", cash: "Cash", cheque: "Cheque" };

function greeting(customerName: string): EmailBlock {
  const name = customerName.trim();
  return { kind: "paragraph", text: name ? `Hello ${name},` : "Hello," };
}

function daysText(days: number): string {
  return `${days} ${days === 1 ? "day" : "days"}`;
}

export type PaymentReceiptInput = {
  customerName: string;
  invoiceNumber: string;
  amountCents: number;
  method: PaymentMethod;
  /** The cheque number, the office's note or the card payment's reference; null when none. */
  reference: string | null;
  /** The business's date the money was received (YYYY-MM-DD). */
  receivedOn: string;
  /** What is still owed on the invoice after this payment (0: paid in full). */
  balanceCents: number;
  /** The signed pay link for the rest; only shown while something is still owed. */
  payUrl?: string | null;
};

/** Sent to the customer once for each payment received. */
export function paymentReceiptEmail(input: PaymentReceiptInput): EmailContent {
  const amount = formatDollars(input.amountCents);
  const balance = formatDollars(input.balanceCents);
  const received = formatServiceDate(input.receivedOn);
  const reference = input.reference?.trim() || null;
  const paidInFull = input.balanceCents === 0;

  const rows: [string, string][] = [
    ["Invoice", input.invoiceNumber],
    ["Amount received", amount],
    ["Paid by", METHOD_NAMES[input.method]],
  ];
  if (reference) rows.push(["Reference", reference]);
  rows.push(["Date received", received], ["Still owed", paidInFull ? "Nothing: paid in full" : balance]);

  const blocks: EmailBlock[] = [
    greeting(input.customerName),
    { kind: "paragraph", text: `Thank you: we received ${amount} for invoice ${input.invoiceNumber} on ${received}. Keep this e-mail as your receipt.` },
    { kind: "details", rows },
  ];
  if (paidInFull) {
    blocks.push({ kind: "paragraph", text: `Invoice ${input.invoiceNumber} is paid in full. There is nothing more to pay.`, strong: true });
  } else {
    blocks.push({ kind: "paragraph", text: `${balance} is still owed on invoice ${input.invoiceNumber}.`, strong: true });
    if (input.payUrl) blocks.push({ kind: "button", label: `Pay the remaining ${balance} online`, href: input.payUrl });
    blocks.push({ kind: "paragraph", text: "You can also pay the rest by cheque or in cash, quoting the invoice number." });
  }

  return renderEmail({
    subject: `Receipt for invoice ${input.invoiceNumber}: ${amount} received`,
    preheader: paidInFull ? `Invoice ${input.invoiceNumber} is paid in full` : `${balance} still owed on invoice ${input.invoiceNumber}`,
    title: `Payment received: ${amount}`,
    blocks,
  });
}

export type OverdueReminderInput = {
  customerName: string;
  invoiceNumber: string;
  dueOn: string;
  /** Whole days from the due date to the business's today (1 or more). */
  daysOverdue: number;
  /** What is still owed. */
  balanceCents: number;
  /** The signed pay link; null leaves the pay button out. */
  payUrl: string | null;
};

/** Sent to the customer when an invoice is past its due date with money still owed. */
export function overdueReminderEmail(input: OverdueReminderInput): EmailContent {
  const balance = formatDollars(input.balanceCents);
  const due = formatServiceDate(input.dueOn);
  const overdue = daysText(input.daysOverdue);

  const ways: string[] = [];
  if (input.payUrl) ways.push("Online by card, with the pay link above. It is personal to this invoice and works without signing in.");
  ways.push(`By cheque, with the invoice number ${input.invoiceNumber} written on it.`);
  ways.push(`In cash, quoting invoice ${input.invoiceNumber}.`);

  const blocks: EmailBlock[] = [
    greeting(input.customerName),
    {
      kind: "paragraph",
      text: `Our records show ${balance} still owed on invoice ${input.invoiceNumber}, which was due on ${due} (${overdue} ago). We would be grateful if you could pay it when you have a moment.`,
    },
    {
      kind: "details",
      rows: [
        ["Invoice", input.invoiceNumber],
        ["Due", due],
        ["Days overdue", String(input.daysOverdue)],
        ["Still owed", balance],
      ],
    },
  ];
  if (input.payUrl) blocks.push({ kind: "button", label: `Pay ${balance} online`, href: input.payUrl });
  blocks.push(
    { kind: "heading", text: "Ways to pay" },
    { kind: "list", items: ways },
    { kind: "paragraph", text: "If you have paid in the last few days, thank you, and please disregard this reminder. If something on the invoice looks wrong, please get in touch and we will look into it." },
  );

  return renderEmail({
    subject: `Reminder: invoice ${input.invoiceNumber}, ${balance} due since ${due}`,
    preheader: `${balance} still owed, ${overdue} past the due date`,
    title: `Invoice ${input.invoiceNumber} is past due`,
    blocks,
  });
}
