import type { Knex } from "knex";
import { anonymiseRecordFields } from "./account-data.server";

// The end of a deleted customer's record hold. Deleting an account that had colonies
// treated keeps the application-record fields (name, address, the places of the
// treatments) until customers.records_kept_until; the worker's sweep calls this every
// few seconds and anonymises them the day after.

export type RecordHoldSweep = {
  /** Customers whose record fields were anonymised now. */
  anonymised: number[];
  /** Customers that failed (left for the next sweep), with the error. */
  failed: { customerId: number; error: unknown }[];
};

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

/**
 * Anonymises the record fields of every customer whose records_kept_until is before
 * `today` (YYYY-MM-DD, the business's today): one transaction per customer under its row
 * lock (a second sweep at the same time finds the hold gone and skips it), the hold
 * cleared, and an audit row "customer.records_anonymised" by the system. One customer
 * failing does not hold up the others.
 */
export async function anonymiseExpiredRecordHolds(db: Knex, today: string): Promise<RecordHoldSweep> {
  if (!ISO_DATE.test(today)) throw new RangeError(`today must be YYYY-MM-DD, not ${JSON.stringify(today)}`);
  const due = await db("customers").whereNotNull("records_kept_until").where("records_kept_until", "<", today).orderBy("id").pluck("id");
  const result: RecordHoldSweep = { anonymised: [], failed: [] };
  for (const id of due.map(Number)) {
    try {
      const done = await db.transaction(async (trx) => {
        const customer = await trx("customers").where({ id }).forUpdate().first("records_kept_until");
        const keptUntil = customer?.records_kept_until ?? null;
        if (keptUntil === null || keptUntil >= today) return false;
        const yards = await anonymiseRecordFields(trx, id);
        await trx("customers").where({ id }).update({ records_kept_until: null, updated_at: trx.fn.now() as unknown as Date });
        await trx("audit_log").insert({
          actor_user_id: null,
          action: "customer.records_anonymised",
          entity_type: "customer",
          entity_id: String(id),
          before: JSON.stringify({ keptUntil }),
          after: JSON.stringify({ keptUntil: null, yardsAnonymised: yards }),
        });
        return true;
      });
      if (done) result.anonymised.push(id);
    } catch (error) {
      result.failed.push({ customerId: id, error });
    }
  }
  return result;
}
