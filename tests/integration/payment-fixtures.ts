import type { Knex } from "knex";

// An open invoice for a new customer, without a visit (payments do not need one).
let seq = 0;
export async function anInvoice(db: Knex, totalCents: number): Promise<{ invoiceId: number; customerId: number; number: string }> {
  seq++;
  const tag = `${seq}.${Math.random().toString(36).slice(2, 8)}`;
  const [customer] = await db("customers").insert({ name: `Payer ${tag}`, email: `payer${tag}@example.test` }).returning("id");
  const year = 2026;
  const sequence = seq + Math.floor(Math.random() * 100000);
  const number = `${year}-${String(sequence).padStart(6, "0")}`;
  const [invoice] = await db("invoices")
    .insert({
      year,
      sequence,
      number,
      customer_id: customer.id,
      status: "open",
      issued_on: "2026-11-10",
      due_on: "2026-11-24",
      subtotal_cents: totalCents,
      tax_cents: 0,
      total_cents: totalCents,
      currency: "usd",
    })
    .returning("id");
  return { invoiceId: Number(invoice.id), customerId: Number(customer.id), number };
}

export async function anOfficeUser(db: Knex): Promise<number> {
  const [user] = await db("users")
    .insert({ email: `office.${Math.random().toString(36).slice(2, 10)}@example.test`, password_hash: "x", role: "office", name: "Office" })
    .returning("id");
  return Number(user.id);
}
