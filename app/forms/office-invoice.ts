import { z } from "zod";

// The office's actions on an invoice page, one schema per `intent`.

/** Dollars as typed ("125", "125.5", "$1,250.00") to whole cents, without floating point. */
export function dollarsToCents(text: string): number | null {
  const clean = text.trim().replace(/^\$/, "").replace(/,/g, "");
  const match = /^(\d{1,7})(?:\.(\d{1,2}))?$/.exec(clean);
  if (!match) return null;
  return Number(match[1]) * 100 + Number((match[2] ?? "").padEnd(2, "0"));
}

const amount = z
  .string({ error: "Enter the amount in dollars, e.g. 125.00." })
  .transform((v, ctx) => {
    const cents = dollarsToCents(v);
    if (cents === null) {
      ctx.addIssue({
        code: "custom",
        message: "Enter the amount in dollars, e.g. 125.00.",
      });
      return z.NEVER;
    }
    if (cents <= 0) {
      ctx.addIssue({
        code: "custom",
        message: "The amount must be more than $0.00.",
      });
      return z.NEVER;
    }
    return cents;
  });

const reason = z
  .string({ error: "Give a reason." })
  .trim()
  .min(1, "Give a reason.")
  .max(500, "Keep the reason under 500 characters.");

export const invoiceActionSchema = z.discriminatedUnion("intent", [
  z.object({
    intent: z.literal("payment"),
    amountCents: amount,
    method: z.enum(["cash", "cheque"], { error: "Choose cash or cheque." }),
    reference: z
      .string()
      .trim()
      .max(120, "Keep the reference under 120 characters.")
      .default(""),
  }),
  z.object({
    intent: z.literal("refund"),
    paymentId: z.coerce
      .number({ error: "Choose a payment." })
      .int()
      .positive("Choose a payment."),
    amountCents: amount,
    reason,
  }),
  z.object({ intent: z.literal("void"), reason }),
  z.object({ intent: z.literal("resend") }),
]);

export type InvoiceAction = z.output<typeof invoiceActionSchema>;

// The invoices table's sorts and status filters, shared by the page and the model.
export const INVOICE_SORTS = [
  "number",
  "customer",
  "issued",
  "due",
  "status",
  "total",
  "paid",
  "balance",
] as const;
export type InvoiceSort = (typeof INVOICE_SORTS)[number];
export const INVOICE_STATUS_FILTERS = [
  "all",
  "open",
  "overdue",
  "paid",
  "void",
  "refunded",
] as const;
export type InvoiceStatusFilter = (typeof INVOICE_STATUS_FILTERS)[number];
