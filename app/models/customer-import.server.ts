import { randomUUID } from "node:crypto";
import type { Knex } from "knex";
import {
  checkCustomerCsv,
  customerCsvText,
  MAX_IMPORT_BYTES,
  type CheckedImportRow,
  type CustomerCsvRecord,
  type ImportRowError,
} from "~/forms/customer-import";

export type CustomerImportResult =
  | {
      ok: true;
      /** Customers in the file (created + updated). */
      customers: number;
      /** Yards in the file (created + updated). */
      yards: number;
      customersCreated: number;
      yardsCreated: number;
      colonies: number;
    }
  | { ok: false; errors: ImportRowError[]; totalErrors: number };

function refused(message: string): CustomerImportResult {
  return { ok: false, errors: [{ line: 0, field: "file", message }], totalErrors: 1 };
}

type CustomerGroup = { email: string; first: CheckedImportRow; rows: CheckedImportRow[] };

function customerColumns(row: CheckedImportRow) {
  return {
    name: row.customer_name,
    phone: row.phone,
    address_line: row.address_line,
    city: row.city,
    region: row.region,
    postal_code: row.postal_code,
  };
}

function yardColumns(row: CheckedImportRow) {
  return {
    name: row.yard_name,
    lat: row.lat,
    lng: row.lng,
    colony_count: row.colonies,
    // A file without the box_type column leaves an existing yard's box type as it is.
    ...(row.box_type === null ? {} : { box_type: row.box_type }),
    brood_boxes_per_colony: row.brood_boxes_per_colony,
    brood_status: row.brood_status,
    supers_off: row.supers_off,
    access_notes: row.access_notes,
  };
}

const BATCH = 500;

/**
 * Imports customers and their yards from CSV text. Every row is checked first (the same
 * checks the browser ran); any problem and nothing is written. Otherwise, in one
 * transaction: a customer per e-mail (an existing customer with that e-mail is reused
 * and its contact columns updated), a yard per row (a yard of that customer with the
 * same name is updated rather than repeated), colonies H1…Hn per yard with the yard's
 * brood boxes and box type, and one audit entry.
 */
export async function importCustomersCsv(db: Knex, csvText: string, actorUserId: number | string): Promise<CustomerImportResult> {
  if (Buffer.byteLength(csvText, "utf8") > MAX_IMPORT_BYTES) {
    return refused(`The file is larger than ${MAX_IMPORT_BYTES / 1024 / 1024} MB; split it into smaller files and import them one by one.`);
  }
  const check = await checkCustomerCsv(csvText);
  if (check.totalErrors > 0) return { ok: false, errors: check.errors, totalErrors: check.totalErrors };

  const groups = new Map<string, CustomerGroup>();
  for (const row of check.rows) {
    const group = groups.get(row.email);
    if (group) group.rows.push(row);
    else groups.set(row.email, { email: row.email, first: row, rows: [row] });
  }

  return db.transaction(async (trx) => {
    const emails = [...groups.keys()];
    // Serialise imports: two at once could both create the same new e-mail.
    await trx.raw("select pg_advisory_xact_lock(hashtext('varroute.customer_import'))");

    // Existing customers by e-mail (the oldest one when the office has several).
    const existing = await trx("customers")
      .whereNull("anonymised_at")
      .whereRaw("lower(email) = any(?::text[])", [emails])
      .orderBy("id")
      .select("id", "email");
    const customerIds = new Map<string, number>();
    for (const c of existing) if (!customerIds.has(c.email.toLowerCase())) customerIds.set(c.email.toLowerCase(), c.id);

    let customersCreated = 0;
    for (const group of groups.values()) {
      const id = customerIds.get(group.email);
      if (id !== undefined) {
        await trx("customers").where({ id }).update({ ...customerColumns(group.first), updated_at: trx.fn.now() });
      }
    }
    const fresh = [...groups.values()].filter((g) => !customerIds.has(g.email));
    for (let i = 0; i < fresh.length; i += BATCH) {
      const inserted = await trx("customers")
        .insert(fresh.slice(i, i + BATCH).map((g) => ({ email: g.email, ...customerColumns(g.first) })))
        .returning(["id", "email"]);
      for (const c of inserted) customerIds.set(c.email, c.id);
      customersCreated += inserted.length;
    }

    // Existing yards of these customers, matched by name (case-insensitive).
    const ids = [...new Set(customerIds.values())];
    const existingYards = await trx("yards")
      .whereNull("archived_at")
      .whereRaw("customer_id = any(?::bigint[])", [ids])
      .orderBy("id")
      .select("id", "customer_id", "name");
    const yardIdByKey = new Map<string, number>();
    for (const y of existingYards) {
      const key = `${y.customer_id}\n${y.name.trim().toLowerCase()}`;
      if (!yardIdByKey.has(key)) yardIdByKey.set(key, y.id);
    }

    const updatedYardIds: number[] = [];
    const newYards: Record<string, unknown>[] = [];
    for (const row of check.rows) {
      const customerId = customerIds.get(row.email)!;
      const yardId = yardIdByKey.get(`${customerId}\n${row.yard_name.toLowerCase()}`);
      if (yardId !== undefined) {
        await trx("yards").where({ id: yardId }).update({ ...yardColumns(row), updated_at: trx.fn.now() });
        updatedYardIds.push(yardId);
      } else newYards.push({ customer_id: customerId, box_type: "deep", ...yardColumns(row) });
    }
    const createdYardIds: number[] = [];
    for (let i = 0; i < newYards.length; i += BATCH) {
      const inserted = await trx("yards").insert(newYards.slice(i, i + BATCH)).returning("id");
      createdYardIds.push(...inserted.map((y) => y.id));
    }
    const allYardIds = [...updatedYardIds, ...createdYardIds];

    // One active colony row per colony, H1…Hn, with the yard's brood boxes, box type and status;
    // colonies beyond the count (or not numbered H…) are retired, as when a yard is edited.
    const colonies = await trx.raw<{ rowCount: number }>(
      `insert into colonies (yard_id, label, brood_boxes, box_type, brood_status)
       select y.id, 'H' || n, y.brood_boxes_per_colony, y.box_type, y.brood_status
         from yards y cross join lateral generate_series(1, y.colony_count) as n
        where y.id = any(?::bigint[])
       on conflict (yard_id, label) do update
         set active = true, brood_boxes = excluded.brood_boxes, box_type = excluded.box_type, brood_status = excluded.brood_status, updated_at = now()`,
      [allYardIds],
    );
    if (updatedYardIds.length) {
      await trx.raw(
        `update colonies c set active = false, updated_at = now()
           from yards y
          where c.yard_id = y.id and y.id = any(?::bigint[]) and c.active
            and (c.label !~ '^H[0-9]{1,6}$' or substring(c.label from 2)::int > y.colony_count)`,
        [updatedYardIds],
      );
      // Visits booked ahead take the new colony count, as when a yard is edited.
      await trx.raw(
        `update visits v set colonies_expected = y.colony_count, updated_at = now()
           from yards y
          where v.yard_id = y.id and y.id = any(?::bigint[]) and v.status = 'scheduled' and v.colonies_expected <> y.colony_count`,
        [updatedYardIds],
      );
    }

    const result = {
      ok: true as const,
      customers: groups.size,
      yards: check.rows.length,
      customersCreated,
      yardsCreated: createdYardIds.length,
      colonies: check.rows.reduce((sum, r) => sum + r.colonies, 0),
    };
    await trx("audit_log").insert({
      actor_user_id: Number(actorUserId),
      action: "customers.import",
      entity_type: "customer_import",
      entity_id: randomUUID(),
      after: JSON.stringify({
        rows: check.rows.length,
        customers: result.customers,
        customersCreated,
        customersUpdated: result.customers - customersCreated,
        yardsCreated: result.yardsCreated,
        yardsUpdated: updatedYardIds.length,
        colonyRowsWritten: colonies.rowCount,
        customerIds: ids,
      }),
    });
    return result;
  });
}

/** Every current customer's yards as CSV in the import's columns (one row per yard;
 *  customers without a yard are left out, as a row needs a yard). Imports back unchanged. */
export async function exportCustomersCsv(db: Knex): Promise<string> {
  const rows = await db("yards")
    .join("customers", "customers.id", "yards.customer_id")
    .whereNull("yards.archived_at")
    .whereNull("customers.anonymised_at")
    .orderByRaw("lower(customers.name), customers.id, lower(yards.name), yards.id")
    .select(
      "customers.name as customer_name",
      "customers.email",
      "customers.phone",
      "customers.address_line",
      "customers.city",
      "customers.region",
      "customers.postal_code",
      "yards.name as yard_name",
      "yards.lat",
      "yards.lng",
      "yards.colony_count as colonies",
      "yards.box_type",
      "yards.brood_boxes_per_colony",
      "yards.brood_status",
      "yards.supers_off",
      "yards.access_notes",
    );
  const records: CustomerCsvRecord[] = rows.map((r) => ({
    customer_name: r.customer_name,
    email: r.email,
    phone: r.phone ?? "",
    address_line: r.address_line ?? "",
    city: r.city ?? "",
    region: r.region ?? "",
    postal_code: r.postal_code ?? "",
    yard_name: r.yard_name,
    lat: Number(r.lat),
    lng: Number(r.lng),
    colonies: r.colonies,
    box_type: r.box_type,
    brood_boxes_per_colony: r.brood_boxes_per_colony,
    brood_status: r.brood_status,
    supers_off: r.supers_off ? "yes" : "no",
    access_notes: r.access_notes ?? "",
  }));
  return customerCsvText(records);
}
