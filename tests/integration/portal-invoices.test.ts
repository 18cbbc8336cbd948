import { execFile } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { customerInvoice, listCustomerInvoices, owedSummary, parsePortalInvoiceId } from "~/models/portal-invoices.server";
import { loader as invoicePageLoader } from "~/routes/portal/invoice";
import { loader as invoicePdfLoader } from "~/routes/portal/invoice-pdf";
import { loader as receiptLoader } from "~/routes/portal/invoice-receipt";
import { db } from "~/services/db.server";
import { renderInvoicePdf } from "~/services/invoice-pdf.server";
import { renderReceiptPdf } from "~/services/receipt-pdf.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// Every figure below comes from rows this file inserts; nothing is read from demo data.
// The business is set to Los Angeles so its "today" differs from UTC's late in the evening:
// at 05:30 UTC on 21 November it is still 21:30 on 20 November in Los Angeles (UTC−8 in
// November; Pacific Standard Time, from memory).
const EVENING_IN_LA = new Date("2026-11-21T05:30:00Z"); // 2026-11-20 in Los Angeles, 2026-11-21 in UTC
const NEXT_MORNING_IN_LA = new Date("2026-11-21T09:00:00Z"); // 2026-11-21 in Los Angeles

const run = promisify(execFile);
let seq = 0;
let workDir: string;

async function aCustomer(name: string) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `portal${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role: "customer", name })
    .returning("id");
  const [customer] = await db("customers")
    .insert({ user_id: user.id, name, email: `customer${seq}@example.test`, address_line: "12 Linden Lane", city: "Dryden", region: "NY", postal_code: "13053" })
    .returning("id");
  return { userId: Number(user.id), customerId: Number(customer.id) };
}

async function anInvoice(customerId: number, p: { issued: string; due: string; total: number; status?: "open" | "paid" | "void" | "refunded"; sentAt?: Date }) {
  seq++;
  const [row] = await db("invoices")
    .insert({
      year: 2026,
      sequence: seq,
      number: `2026-${String(seq).padStart(4, "0")}`,
      customer_id: customerId,
      status: p.status ?? "open",
      issued_on: p.issued,
      due_on: p.due,
      subtotal_cents: p.total,
      tax_cents: 0,
      total_cents: p.total,
      currency: "usd",
      sent_at: p.sentAt ?? null,
    })
    .returning(["id", "number"]);
  await db("invoice_lines").insert({ invoice_id: row.id, position: 1, kind: "colony", description: "Oxalic acid vapor treatment", quantity: 1, unit_cents: p.total, amount_cents: p.total });
  return { id: Number(row.id), number: String(row.number) };
}

async function aPayment(invoiceId: number, p: { cents: number; method: "card" | "cash" | "cheque"; reference?: string; at: string }) {
  const [row] = await db("payments")
    .insert({ invoice_id: invoiceId, amount_cents: p.cents, method: p.method, reference: p.reference ?? null, received_at: new Date(p.at) })
    .returning("id");
  return Number(row.id);
}

async function aRefund(paymentId: number, cents: number, at: string) {
  await db("refunds").insert({ payment_id: paymentId, amount_cents: cents, reason: "Test refund", created_at: new Date(at) });
}

async function pdfText(pdf: Buffer, name: string): Promise<string> {
  const file = path.join(workDir, `${name}.pdf`);
  await writeFile(file, pdf);
  const { stdout } = await run("pdftotext", ["-layout", file, "-"]);
  return stdout;
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type AnyLoader = (args: never) => Promise<unknown>;
async function callLoader(loader: AnyLoader, url: string, invoiceId: string, userId: number): Promise<{ status: number; body: unknown }> {
  const request = new Request(`http://localhost${url}`, { headers: { Cookie: await cookieFor(userId) } });
  try {
    const result = await loader({ request, params: { invoiceId }, context: {} } as never);
    return result instanceof Response ? { status: result.status, body: result } : { status: 200, body: result };
  } catch (thrown) {
    if (thrown instanceof Response) return { status: thrown.status, body: thrown };
    const init = (thrown as { init?: { status?: number } }).init;
    if (init?.status) return { status: init.status, body: thrown };
    throw thrown;
  }
}

const ada = { userId: 0, customerId: 0 };
const bo = { userId: 0, customerId: 0 };
const ids: Record<string, { id: number; number: string }> = {};

beforeAll(async () => {
  workDir = await mkdtemp(path.join(tmpdir(), "portal-invoices-"));
  await resetDatabase(db);
  await db("settings").insert({ key: "business", value: JSON.stringify({ ...defaultBusinessSettings, timeZone: "America/Los_Angeles" }) });
  Object.assign(ada, await aCustomer("Ada Apiary"));
  Object.assign(bo, await aCustomer("Bo Beekeeper"));

  // Ada's invoices, oldest first here; the list must show them newest first.
  ids.refunded = await anInvoice(ada.customerId, { issued: "2026-09-01", due: "2026-09-15", total: 5_000, status: "refunded" });
  const card = await aPayment(ids.refunded.id, { cents: 5_000, method: "card", reference: "pi_test_refunded", at: "2026-09-05T16:00:00Z" });
  await aRefund(card, 5_000, "2026-09-20T16:00:00Z");

  ids.overduePart = await anInvoice(ada.customerId, { issued: "2026-10-01", due: "2026-11-19", total: 30_000, sentAt: new Date("2026-10-01T15:00:00Z") });
  await aPayment(ids.overduePart.id, { cents: 12_000, method: "cash", at: "2026-10-10T17:00:00Z" }); // 10:00 PDT
  await aPayment(ids.overduePart.id, { cents: 2_500, method: "cheque", reference: "Cheque 311", at: "2026-11-20T17:00:00Z" }); // 09:00 PST

  ids.paidPartRefund = await anInvoice(ada.customerId, { issued: "2026-10-15", due: "2026-10-29", total: 40_000, status: "paid" });
  const cheque = await aPayment(ids.paidPartRefund.id, { cents: 40_000, method: "cheque", reference: "77", at: "2026-10-20T18:00:00Z" });
  await aRefund(cheque, 1_500, "2026-10-25T18:00:00Z");

  ids.dueToday = await anInvoice(ada.customerId, { issued: "2026-11-06", due: "2026-11-20", total: 10_000 });
  ids.voidUnsent = await anInvoice(ada.customerId, { issued: "2026-11-10", due: "2026-11-24", total: 7_000, status: "void" });

  // Bo's overdue invoice must never show for Ada.
  ids.bo = await anInvoice(bo.customerId, { issued: "2026-11-12", due: "2026-11-13", total: 9_900 });
});

afterAll(async () => {
  await rm(workDir, { recursive: true, force: true });
  await db.destroy();
});

describe("the customer's invoice list", () => {
  it("lists only the customer's own invoices, newest first, with net paid, balance and status", async () => {
    const list = await listCustomerInvoices(db, ada.customerId, { now: EVENING_IN_LA });
    expect(list.map((i) => i.id)).toEqual([ids.voidUnsent.id, ids.dueToday.id, ids.paidPartRefund.id, ids.overduePart.id, ids.refunded.id]);
    const byId = new Map(list.map((i) => [i.id, i]));
    expect(byId.has(ids.bo.id)).toBe(false);

    expect(byId.get(ids.overduePart.id)).toMatchObject({ totalCents: 30_000, paidCents: 14_500, balanceCents: 15_500, status: "overdue", payable: true });
    // Due "today" in Los Angeles: not overdue yet, although it is already the 21st in UTC.
    expect(byId.get(ids.dueToday.id)).toMatchObject({ totalCents: 10_000, paidCents: 0, balanceCents: 10_000, status: "open", payable: true });
    // A part refund on a paid invoice is money given back, not money owed.
    expect(byId.get(ids.paidPartRefund.id)).toMatchObject({ totalCents: 40_000, paidCents: 38_500, balanceCents: 0, status: "paid", payable: false });
    expect(byId.get(ids.refunded.id)).toMatchObject({ paidCents: 0, balanceCents: 0, status: "refunded", payable: false });
    expect(byId.get(ids.voidUnsent.id)).toMatchObject({ paidCents: 0, balanceCents: 0, status: "void", payable: false });

    expect(owedSummary(list)).toEqual({ owedCents: 25_500, openCount: 2, overdueCents: 15_500, overdueCount: 1 });
  });

  it("counts an invoice overdue once its due date has passed in the business's time zone", async () => {
    const list = await listCustomerInvoices(db, ada.customerId, { now: NEXT_MORNING_IN_LA });
    expect(list.find((i) => i.id === ids.dueToday.id)?.status).toBe("overdue");
    expect(owedSummary(list)).toEqual({ owedCents: 25_500, openCount: 2, overdueCents: 25_500, overdueCount: 2 });
  });

  it("is empty for a customer without invoices", async () => {
    const lonely = await aCustomer("Cy Colony");
    expect(await listCustomerInvoices(db, lonely.customerId)).toEqual([]);
  });
});

describe("one of the customer's invoices", () => {
  it("returns null for another customer's invoice or one that does not exist", async () => {
    expect(await customerInvoice(db, ada.customerId, ids.bo.id)).toBeNull();
    expect(await customerInvoice(db, bo.customerId, ids.overduePart.id)).toBeNull();
    expect(await customerInvoice(db, ada.customerId, 987_654_321)).toBeNull();
    expect(parsePortalInvoiceId("12")).toBe(12);
    for (const bad of ["abc", "0", "-3", "1e3", "12.0", "", undefined]) expect(parsePortalInvoiceId(bad)).toBeNull();
  });

  it("has the lines, the totals, each payment with its refunds, and whether it was e-mailed", async () => {
    const invoice = await customerInvoice(db, ada.customerId, ids.paidPartRefund.id, { now: EVENING_IN_LA });
    expect(invoice).not.toBeNull();
    expect(invoice!).toMatchObject({ number: ids.paidPartRefund.number, totalCents: 40_000, receivedCents: 40_000, refundedCents: 1_500, paidCents: 38_500, balanceCents: 0, displayStatus: "paid" });
    expect(invoice!.lines).toHaveLength(1);
    expect(invoice!.payments).toHaveLength(1);
    expect(invoice!.payments[0]).toMatchObject({ method: "cheque", methodName: "Cheque", reference: "77", amountCents: 40_000, refundedCents: 1_500 });
    expect(invoice!.payments[0].refunds.map((r) => r.amountCents)).toEqual([1_500]);
    expect(invoice!.emailed.sent).toBe(false);
    expect(invoice!.timeZone).toBe("America/Los_Angeles");

    const sent = await customerInvoice(db, ada.customerId, ids.overduePart.id, { now: EVENING_IN_LA });
    expect(sent!.emailed).toEqual({ sent: true, sentAt: new Date("2026-10-01T15:00:00Z") });
    expect(sent!).toMatchObject({ displayStatus: "overdue", payable: true, balanceCents: 15_500 });
    expect(sent!.payments.map((p) => p.amountCents)).toEqual([12_000, 2_500]);
  });
});

describe("receipt and invoice PDFs", () => {
  it("renders a receipt with the invoice number, each payment and the times in the business's zone", async () => {
    const invoice = await customerInvoice(db, ada.customerId, ids.overduePart.id);
    const pdf = await renderReceiptPdf(invoice!, { now: new Date("2026-11-21T05:30:00Z") });
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    const text = await pdfText(pdf, "receipt-part");
    expect(text).toContain(ids.overduePart.number);
    expect(text).toContain("$120.00");
    expect(text).toContain("$25.00");
    expect(text).toContain("Cheque 311");
    expect(text).toContain("$145.00"); // total received
    expect(text).toContain("$155.00"); // still owed
    expect(text).toContain("Nov 20, 2026, 9:00 AM PST"); // 17:00 UTC in Los Angeles
    expect(text).toContain("Oct 10, 2026, 10:00 AM PDT"); // summer time until 1 November 2026
  });

  it("shows refunds on the receipt", async () => {
    const invoice = await customerInvoice(db, ada.customerId, ids.paidPartRefund.id);
    const text = await pdfText(await renderReceiptPdf(invoice!), "receipt-refund");
    expect(text).toContain(ids.paidPartRefund.number);
    expect(text).toContain("$400.00");
    expect(text).toMatch(/Refund/);
    expect(text).toContain("$15.00");
    expect(text).toContain("$385.00"); // total received, net of the refund
  });

  it("renders the customer's invoice PDF with the pay link while money is owed", async () => {
    const invoice = await customerInvoice(db, ada.customerId, ids.dueToday.id);
    const text = await pdfText(await renderInvoicePdf(invoice!, { payUrl: "http://127.0.0.1:3000/pay/example" }), "invoice");
    expect(text).toContain(ids.dueToday.number);
    expect(text).toContain("Pay online by card");
  });
});

describe("the portal's invoice routes", () => {
  it("serve the customer's own invoice and answer 404 for anyone else's, unknown or malformed ids", async () => {
    const own = String(ids.overduePart.id);
    const page = await callLoader(invoicePageLoader as AnyLoader, `/portal/invoices/${own}`, own, ada.userId);
    expect(page.status).toBe(200);
    expect((page.body as { payPath: string | null }).payPath).toMatch(/^\/pay\//);

    for (const [loader, suffix] of [
      [invoicePageLoader, ""],
      [invoicePdfLoader, "/pdf"],
      [receiptLoader, "/receipt"],
    ] as const) {
      for (const id of [String(ids.bo.id), "987654321", "not-a-number"]) {
        const res = await callLoader(loader as AnyLoader, `/portal/invoices/${id}${suffix}`, id, ada.userId);
        expect(res.status, `${suffix || "page"} for ${id}`).toBe(404);
      }
    }
  });

  it("serve the PDF and the receipt as PDFs, and no receipt before any payment", async () => {
    const own = String(ids.overduePart.id);
    const pdf = await callLoader(invoicePdfLoader as AnyLoader, `/portal/invoices/${own}/pdf`, own, ada.userId);
    expect(pdf.status).toBe(200);
    expect((pdf.body as Response).headers.get("Content-Type")).toBe("application/pdf");
    const pdfBody = Buffer.from(await (pdf.body as Response).arrayBuffer());
    expect(await pdfText(pdfBody, "route-invoice")).toContain("Pay online by card");

    const receipt = await callLoader(receiptLoader as AnyLoader, `/portal/invoices/${own}/receipt`, own, ada.userId);
    expect(receipt.status).toBe(200);
    const receiptBody = Buffer.from(await (receipt.body as Response).arrayBuffer());
    expect(receiptBody.subarray(0, 5).toString("latin1")).toBe("%PDF-");

    const unpaid = String(ids.dueToday.id);
    expect((await callLoader(receiptLoader as AnyLoader, `/portal/invoices/${unpaid}/receipt`, unpaid, ada.userId)).status).toBe(404);
    const voidOne = String(ids.voidUnsent.id);
    expect((await callLoader(invoicePageLoader as AnyLoader, `/portal/invoices/${voidOne}`, voidOne, ada.userId)).status).toBe(200);
  });
});
