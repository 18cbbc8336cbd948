import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  listInvoices,
  voidInvoice,
  VoidRefused,
  type InvoiceFilters,
} from "~/models/office-invoices.server";
import { recordOfficePayment, refundPayment } from "~/models/payments.server";
import { db } from "~/services/db.server";
import { anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

const TODAY = "2026-11-20";
let office: number;
let seq = 0;

async function invoice(
  customerId: number,
  p: { issued: string; due: string; total: number; status?: "open" | "void" },
) {
  seq++;
  const [row] = await db("invoices")
    .insert({
      year: 2026,
      sequence: seq,
      number: `2026-${String(seq).padStart(6, "0")}`,
      customer_id: customerId,
      status: p.status ?? "open",
      issued_on: p.issued,
      due_on: p.due,
      subtotal_cents: p.total,
      tax_cents: 0,
      total_cents: p.total,
      currency: "usd",
    })
    .returning("id");
  return Number(row.id);
}

async function customer(name: string) {
  const [row] = await db("customers")
    .insert({
      name,
      email: `${name.toLowerCase().replace(/\W+/g, ".")}@example.test`,
    })
    .returning("id");
  return Number(row.id);
}

const ids: Record<string, number> = {};
const all: InvoiceFilters = { search: "", status: "all", from: null, to: null };
const list = (
  filters: Partial<InvoiceFilters> = {},
  more: Partial<{
    sort:
      | "number"
      | "customer"
      | "issued"
      | "due"
      | "status"
      | "total"
      | "paid"
      | "balance";
    dir: "asc" | "desc";
    page: number;
    pageSize: number;
  }> = {},
) =>
  listInvoices(
    db,
    {
      ...all,
      ...filters,
      sort: "number",
      dir: "asc",
      page: 1,
      pageSize: 25,
      ...more,
    },
    TODAY,
  );

beforeAll(async () => {
  await resetDatabase(db);
  office = await anOfficeUser(db);
  const ada = await customer("Ada Apiary");
  const bee = await customer("Bee Farm");
  const cam = await customer("Cam Honey");
  ids.openFuture = await invoice(ada, {
    issued: "2026-11-15",
    due: "2026-11-29",
    total: 10_000,
  }); // open, not due
  ids.overdue = await invoice(ada, {
    issued: "2026-10-01",
    due: "2026-10-15",
    total: 20_000,
  }); // overdue
  ids.partOverdue = await invoice(bee, {
    issued: "2026-10-20",
    due: "2026-11-03",
    total: 30_000,
  }); // overdue, partly paid
  ids.paid = await invoice(bee, {
    issued: "2026-11-01",
    due: "2026-11-15",
    total: 40_000,
  }); // paid in full, part refunded
  ids.refunded = await invoice(cam, {
    issued: "2026-09-10",
    due: "2026-09-24",
    total: 5_000,
  }); // refunded
  ids.void = await invoice(cam, {
    issued: "2026-11-18",
    due: "2026-12-02",
    total: 7_000,
    status: "void",
  });
  await recordOfficePayment(db, {
    invoiceId: ids.partOverdue,
    amountCents: 12_000,
    method: "cash",
    actorUserId: office,
  });
  const paid = await recordOfficePayment(db, {
    invoiceId: ids.paid,
    amountCents: 40_000,
    method: "cheque",
    reference: "77",
    actorUserId: office,
  });
  await refundPayment(db, {
    paymentId: paid.paymentId,
    amountCents: 1_500,
    reason: "Goodwill",
    actorUserId: office,
  });
  const refunded = await recordOfficePayment(db, {
    invoiceId: ids.refunded,
    amountCents: 5_000,
    method: "cash",
    actorUserId: office,
  });
  await refundPayment(db, {
    paymentId: refunded.paymentId,
    amountCents: 5_000,
    reason: "Visit cancelled",
    actorUserId: office,
  });
});

afterAll(async () => {
  await db.destroy();
});

const idsOf = (page: { rows: { id: number }[] }) => page.rows.map((r) => r.id);

describe("office invoices table", () => {
  it("lists every invoice with net paid, balance and the overdue flag", async () => {
    const page = await list();
    expect(page.total).toBe(6);
    const byId = new Map(page.rows.map((r) => [r.id, r]));
    expect(byId.get(ids.paid)).toMatchObject({
      status: "paid",
      totalCents: 40_000,
      paidCents: 38_500,
      balanceCents: 1_500,
      overdue: false,
    });
    expect(byId.get(ids.partOverdue)).toMatchObject({
      status: "open",
      paidCents: 12_000,
      balanceCents: 18_000,
      overdue: true,
    });
    expect(byId.get(ids.refunded)).toMatchObject({
      status: "refunded",
      paidCents: 0,
    });
    expect(byId.get(ids.void)).toMatchObject({
      status: "void",
      balanceCents: 0,
    });
    expect(byId.get(ids.openFuture)).toMatchObject({
      overdue: false,
      balanceCents: 10_000,
    });
    expect(byId.get(ids.overdue)?.customerName).toBe("Ada Apiary");
  });

  it("filters by status, overdue, search and issue dates", async () => {
    expect(idsOf(await list({ status: "open" })).sort()).toEqual(
      [ids.openFuture, ids.overdue, ids.partOverdue].sort(),
    );
    expect(idsOf(await list({ status: "overdue" })).sort()).toEqual(
      [ids.overdue, ids.partOverdue].sort(),
    );
    expect(idsOf(await list({ status: "paid" }))).toEqual([ids.paid]);
    expect(idsOf(await list({ status: "void" }))).toEqual([ids.void]);
    expect(idsOf(await list({ status: "refunded" }))).toEqual([ids.refunded]);
    expect(idsOf(await list({ search: "bee" })).sort()).toEqual(
      [ids.partOverdue, ids.paid].sort(),
    );
    const number = (await db("invoices")
      .where({ id: ids.void })
      .first("number"))!.number;
    expect(idsOf(await list({ search: number }))).toEqual([ids.void]);
    expect(idsOf(await list({ search: "%" }))).toEqual([]);
    expect(
      idsOf(await list({ from: "2026-10-20", to: "2026-11-15" })).sort(),
    ).toEqual([ids.openFuture, ids.partOverdue, ids.paid].sort());
    expect(idsOf(await list({ from: "2026-11-16" })).sort()).toEqual([
      ids.void,
    ]);
    expect(idsOf(await list({ to: "2026-09-30" }))).toEqual([ids.refunded]);
    expect(idsOf(await list({ status: "overdue", search: "ada" }))).toEqual([
      ids.overdue,
    ]);
  });

  it("sorts both ways on every column", async () => {
    const asc = idsOf(await list({}, { sort: "total", dir: "asc" }));
    expect(asc).toEqual([
      ids.refunded,
      ids.void,
      ids.openFuture,
      ids.overdue,
      ids.partOverdue,
      ids.paid,
    ]);
    expect(idsOf(await list({}, { sort: "total", dir: "desc" }))).toEqual(
      [...asc].reverse(),
    );
    const issued = idsOf(await list({}, { sort: "issued", dir: "asc" }));
    expect(issued).toEqual([
      ids.refunded,
      ids.overdue,
      ids.partOverdue,
      ids.paid,
      ids.openFuture,
      ids.void,
    ]);
    expect(idsOf(await list({}, { sort: "issued", dir: "desc" }))).toEqual(
      [...issued].reverse(),
    );
    const customers = (
      await list({}, { sort: "customer", dir: "desc" })
    ).rows.map((r) => r.customerName);
    expect(customers).toEqual([
      "Cam Honey",
      "Cam Honey",
      "Bee Farm",
      "Bee Farm",
      "Ada Apiary",
      "Ada Apiary",
    ]);
    const balances = (
      await list({}, { sort: "balance", dir: "desc" })
    ).rows.map((r) => r.balanceCents);
    expect(balances).toEqual([...balances].sort((a, b) => b - a));
    const paid = (await list({}, { sort: "paid", dir: "asc" })).rows.map(
      (r) => r.paidCents,
    );
    expect(paid).toEqual([...paid].sort((a, b) => a - b));
    for (const sort of ["number", "due", "status"] as const) {
      const a = idsOf(await list({}, { sort, dir: "asc" }));
      const d = idsOf(await list({}, { sort, dir: "desc" }));
      expect(d, sort).toEqual([...a].reverse());
    }
  });

  it("pages through the rows and clamps a page past the end", async () => {
    const first = await list({}, { pageSize: 25 });
    expect(first.rows).toHaveLength(6);
    // Page size is not limited here (the route limits it); 4 a page makes two pages.
    const p1 = await list({}, { pageSize: 4, page: 1 });
    const p2 = await list({}, { pageSize: 4, page: 2 });
    expect(p1.rows).toHaveLength(4);
    expect(p2.rows).toHaveLength(2);
    expect([...idsOf(p1), ...idsOf(p2)]).toEqual(idsOf(first));
    const past = await list({}, { pageSize: 4, page: 9 });
    expect(past.page).toBe(2);
    expect(idsOf(past)).toEqual(idsOf(p2));
    expect(p2.total).toBe(6);
  });

  it("totals of open, overdue and paid equal independent sums for the filtered set", async () => {
    for (const filters of [
      {},
      { search: "bee" },
      { from: "2026-10-01", to: "2026-10-31" },
      { status: "overdue" as const },
    ]) {
      const page = await list(filters);
      const inSet = idsOf(await list(filters, { pageSize: 100 }));
      const sum = async (where: string) =>
        (
          await db.raw(
            `select count(*)::int as n, coalesce(sum(total_cents), 0)::int as cents,
                    coalesce(sum(greatest(0, total_cents - coalesce((select sum(amount_cents) from payments p where p.invoice_id = invoices.id), 0)
                      + coalesce((select sum(r.amount_cents) from refunds r join payments p on p.id = r.payment_id where p.invoice_id = invoices.id), 0))), 0)::int as balance
               from invoices where id = any(?) and ${where}`,
            [inSet, TODAY],
          )
        ).rows[0];
      const open = await sum("status = 'open' and ?::date is not null");
      const overdue = await sum("status = 'open' and due_on < ?::date");
      const paid = await sum("status = 'paid' and ?::date is not null");
      expect(page.totals, JSON.stringify(filters)).toEqual({
        open: { count: open.n, cents: open.cents, balanceCents: open.balance },
        overdue: {
          count: overdue.n,
          cents: overdue.cents,
          balanceCents: overdue.balance,
        },
        paid: { count: paid.n, cents: paid.cents },
      });
    }
    const everything = await list();
    expect(everything.totals.open).toEqual({
      count: 3,
      cents: 60_000,
      balanceCents: 48_000,
    });
    expect(everything.totals.overdue).toEqual({
      count: 2,
      cents: 50_000,
      balanceCents: 38_000,
    });
    expect(everything.totals.paid).toEqual({ count: 1, cents: 40_000 });
  });
});

describe("voiding an invoice", () => {
  it("needs a reason, refuses an invoice with payments, and voids an open one with an audit entry", async () => {
    await expect(
      voidInvoice(db, {
        invoiceId: ids.openFuture,
        reason: "  ",
        actorUserId: office,
      }),
    ).rejects.toThrow(VoidRefused);
    await expect(
      voidInvoice(db, {
        invoiceId: ids.paid,
        reason: "Wrong customer",
        actorUserId: office,
      }),
    ).rejects.toThrow(/only an open invoice/);
    await expect(
      voidInvoice(db, {
        invoiceId: ids.partOverdue,
        reason: "Wrong customer",
        actorUserId: office,
      }),
    ).rejects.toThrow(/has payments/);
    expect(
      (await db("invoices").where({ id: ids.paid }).first("status"))!.status,
    ).toBe("paid");

    await voidInvoice(db, {
      invoiceId: ids.openFuture,
      reason: "Duplicate of another invoice",
      actorUserId: office,
    });
    expect(
      await db("invoices")
        .where({ id: ids.openFuture })
        .first("status", "void_reason"),
    ).toEqual({ status: "void", void_reason: "Duplicate of another invoice" });
    const audit = await db("audit_log")
      .where({ action: "invoice.void", entity_id: String(ids.openFuture) })
      .first("actor_user_id");
    expect(audit?.actor_user_id).toBe(office);
    await expect(
      voidInvoice(db, {
        invoiceId: ids.openFuture,
        reason: "Again",
        actorUserId: office,
      }),
    ).rejects.toThrow(VoidRefused);
  });
});

describe("resending an invoice e-mail", () => {
  it("queues a new e-mail each time with its own resend key, and none for a void invoice", async () => {
    const { resendInvoiceEmail } =
      await import("~/models/invoice-resend.server");
    const first = await resendInvoiceEmail(db, {
      invoiceId: ids.overdue,
      actorUserId: office,
    });
    const second = await resendInvoiceEmail(db, {
      invoiceId: ids.overdue,
      actorUserId: office,
    });
    expect(first.status).toBe("queued");
    expect(second.status).toBe("queued");
    const rows = await db("email_log")
      .where({ invoice_id: ids.overdue })
      .orderBy("id")
      .select("dedupe_key", "status", "attachments");
    expect(rows.map((r) => r.dedupe_key)).toEqual([
      `invoice:${ids.overdue}:resend:1`,
      `invoice:${ids.overdue}:resend:2`,
    ]);
    expect(
      rows.every(
        (r) =>
          r.status === "queued" &&
          r.attachments?.[0]?.contentType === "application/pdf",
      ),
    ).toBe(true);
    expect(
      await resendInvoiceEmail(db, {
        invoiceId: ids.void,
        actorUserId: office,
      }),
    ).toMatchObject({ status: "refused" });
  });
});
