import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { invoiceBalance, PaymentRefused, recordOfficePayment, refundPayment } from "~/models/payments.server";
import { db } from "~/services/db.server";
import { anInvoice, anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await db.destroy();
});

let office: number;
beforeEach(async () => {
  await resetDatabase(db);
  office = await anOfficeUser(db);
});

async function status(invoiceId: number) {
  return (await db("invoices").where({ id: invoiceId }).first("status"))!.status;
}

describe("office payments", () => {
  it("takes a partial cash payment, then a cheque for the rest, and marks the invoice paid", async () => {
    const { invoiceId } = await anInvoice(db, 12_500);
    const first = await recordOfficePayment(db, { invoiceId, amountCents: 5_000, method: "cash", reference: null, actorUserId: office });
    expect(first).toMatchObject({ status: "open", balanceCents: 7_500 });
    expect(await status(invoiceId)).toBe("open");

    const second = await recordOfficePayment(db, { invoiceId, amountCents: 7_500, method: "cheque", reference: "Cheque 1042", actorUserId: office });
    expect(second).toMatchObject({ status: "paid", balanceCents: 0 });
    expect(await status(invoiceId)).toBe("paid");
    expect(await invoiceBalance(db, invoiceId)).toEqual({ totalCents: 12_500, paidCents: 12_500, refundedCents: 0, balanceCents: 0 });

    const payments = await db("payments").where({ invoice_id: invoiceId }).orderBy("id");
    expect(payments.map((p) => [p.method, p.amount_cents, p.reference, p.recorded_by])).toEqual([
      ["cash", 5_000, null, office],
      ["cheque", 7_500, "Cheque 1042", office],
    ]);
    const audit = await db("audit_log").orderBy("id").select("action", "actor_user_id");
    expect(audit.map((a) => a.action)).toEqual(["payment.record", "payment.record", "invoice.status"]);
    expect(audit.every((a) => a.actor_user_id === office)).toBe(true);
  });

  it("refuses more than the balance, and any payment on a paid invoice", async () => {
    const { invoiceId } = await anInvoice(db, 10_000);
    await expect(recordOfficePayment(db, { invoiceId, amountCents: 10_001, method: "cash", reference: null, actorUserId: office })).rejects.toThrow(PaymentRefused);
    await recordOfficePayment(db, { invoiceId, amountCents: 6_000, method: "cash", reference: null, actorUserId: office });
    await expect(recordOfficePayment(db, { invoiceId, amountCents: 4_001, method: "cheque", reference: "101", actorUserId: office })).rejects.toThrow(
      "$40.01 is more than the $40.00 still owed",
    );
    await recordOfficePayment(db, { invoiceId, amountCents: 4_000, method: "cheque", reference: "101", actorUserId: office });
    await expect(recordOfficePayment(db, { invoiceId, amountCents: 1, method: "cash", reference: null, actorUserId: office })).rejects.toThrow(PaymentRefused);
    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("amount_cents")).toEqual([6_000, 4_000]);
  });

  it("refuses amounts that are not whole positive cents", async () => {
    const { invoiceId } = await anInvoice(db, 10_000);
    for (const amountCents of [0, -5, 12.5]) {
      await expect(recordOfficePayment(db, { invoiceId, amountCents, method: "cash", reference: null, actorUserId: office })).rejects.toThrow(PaymentRefused);
    }
    expect(await db("payments").pluck("id")).toEqual([]);
  });

  it("refunds cash by recording it: refunded when every cent paid is given back", async () => {
    const { invoiceId } = await anInvoice(db, 8_000);
    const { paymentId } = await recordOfficePayment(db, { invoiceId, amountCents: 8_000, method: "cash", reference: null, actorUserId: office });
    const partial = await refundPayment(db, { paymentId, amountCents: 3_000, reason: "Two colonies were dead-outs", actorUserId: office });
    expect(partial.status).toBe("paid");
    await expect(refundPayment(db, { paymentId, amountCents: 5_001, reason: "Too much", actorUserId: office })).rejects.toThrow(PaymentRefused);
    const rest = await refundPayment(db, { paymentId, amountCents: 5_000, reason: "Visit cancelled", actorUserId: office });
    expect(rest.status).toBe("refunded");
    expect(await status(invoiceId)).toBe("refunded");
    expect(await db("refunds").where({ payment_id: paymentId }).pluck("stripe_refund_id")).toEqual([null, null]);
  });
});
