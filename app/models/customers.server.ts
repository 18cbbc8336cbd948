import type { Knex } from "knex";
import { DEFAULT_PAGE_SIZE, PAGE_SIZES, type SortDir, type TablePage } from "~/components/data-table/query";
import { businessToday } from "~/services/clock.server";
import { isYardBookingState, YARD_BOOKING_STATES, yardBookingStates, type YardBookingState } from "./yard-booking-state.server";

// The office's and dispatcher's tables of customers and of yards: one SQL query for the
// page of rows and one for the count and totals of the whole filtered set (no query per
// row). Search, sort and paging come from the URL; sort columns are whitelisted here.

/** Visit statuses that count as a visit booked ahead. */
const BOOKED_VISIT = ["scheduled", "in_progress"] as const;

export type TableOptions<S extends string> = {
  search?: string;
  sort?: S | string;
  dir?: SortDir | string;
  page?: number;
  pageSize?: number;
  /** The business's date; looked up from settings when not given. */
  today?: string;
};

/** A search text as an ILIKE pattern that matches it literally anywhere. */
function containsPattern(search: string): string {
  return `%${search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

/** The digits of a search that looks like (part of) a phone number, else null. */
function phoneDigits(search: string): string | null {
  if (!/^[0-9+()\-. ]+$/.test(search)) return null;
  const digits = search.replace(/\D/g, "");
  return digits.length >= 3 ? digits : null;
}

function normalise<S extends string>(options: TableOptions<S>, sorts: Record<S, string>, defaultSort: S) {
  const sort = options.sort && Object.hasOwn(sorts, options.sort) ? (options.sort as S) : defaultSort;
  const dir: SortDir = options.dir === "desc" ? "desc" : "asc";
  const pageSize = (PAGE_SIZES as readonly number[]).includes(options.pageSize ?? 0) ? options.pageSize! : DEFAULT_PAGE_SIZE;
  const page = Number.isInteger(options.page) && options.page! >= 1 ? options.page! : 1;
  return { search: (options.search ?? "").trim(), sort, dir, page, pageSize };
}

function clampPage(page: number, total: number, pageSize: number): number {
  return Math.min(page, Math.max(1, Math.ceil(total / pageSize)));
}

// ------------------------------------------------------------------ customers

/** Sortable columns of the customers table and the SQL each sorts by. */
const CUSTOMER_SORT_SQL = {
  name: "lower(t.name)",
  email: "lower(t.email)",
  phone: "t.phone",
  town: "lower(t.town)",
  yards: "t.yards",
  colonies: "t.colonies",
  balance: "t.open_balance_cents",
  nextVisit: "t.next_visit_date",
} as const;
export type CustomerSort = keyof typeof CUSTOMER_SORT_SQL;
export const CUSTOMER_SORTS = Object.keys(CUSTOMER_SORT_SQL) as CustomerSort[];

export type CustomerListRow = {
  id: number;
  name: string;
  email: string;
  phone: string | null;
  town: string | null;
  yards: number;
  colonies: number;
  /** Open invoices' totals less what was paid on them (net of refunds), in cents. */
  openBalanceCents: number;
  nextVisitDate: string | null;
};
export type CustomerTotals = { yards: number; colonies: number; openBalanceCents: number };
export type CustomerPage = TablePage<CustomerListRow, CustomerTotals, CustomerSort>;

/** Every current (not anonymised) customer matching the search, with their figures. */
function customerRows(db: Knex, today: string, search: string) {
  const yardFigures = db("yards")
    .whereNull("archived_at")
    .groupBy("customer_id")
    .select("customer_id", db.raw("count(*)::int as yards"), db.raw("coalesce(sum(colony_count), 0)::int as colonies"));
  const refunded = db("refunds").groupBy("payment_id").select("payment_id", db.raw("sum(amount_cents) as cents"));
  const paid = db("payments as p")
    .leftJoin(refunded.as("r"), "r.payment_id", "p.id")
    .groupBy("p.invoice_id")
    .select("p.invoice_id", db.raw("sum(p.amount_cents - coalesce(r.cents, 0)) as cents"));
  const balances = db("invoices as i")
    .leftJoin(paid.as("pd"), "pd.invoice_id", "i.id")
    .where("i.status", "open")
    .groupBy("i.customer_id")
    .select("i.customer_id", db.raw("sum(i.total_cents - coalesce(pd.cents, 0)) as cents"));
  const nextVisits = db("visits as v")
    .join("yards as vy", "vy.id", "v.yard_id")
    .whereNull("vy.archived_at")
    .where("v.service_date", ">=", today)
    .whereIn("v.status", BOOKED_VISIT)
    .groupBy("vy.customer_id")
    .select("vy.customer_id", db.raw("min(v.service_date) as next_visit_date"));

  const q = db("customers as c")
    .leftJoin(yardFigures.as("yf"), "yf.customer_id", "c.id")
    .leftJoin(balances.as("b"), "b.customer_id", "c.id")
    .leftJoin(nextVisits.as("nv"), "nv.customer_id", "c.id")
    .whereNull("c.anonymised_at")
    .select(
      "c.id",
      "c.name",
      "c.email",
      "c.phone",
      "c.city as town",
      db.raw("coalesce(yf.yards, 0)::int as yards"),
      db.raw("coalesce(yf.colonies, 0)::int as colonies"),
      db.raw("coalesce(b.cents, 0)::bigint as open_balance_cents"),
      "nv.next_visit_date",
    );
  if (search) {
    const pattern = containsPattern(search);
    const digits = phoneDigits(search);
    q.where((w) => {
      w.whereILike("c.name", pattern)
        .orWhereILike("c.email", pattern)
        .orWhereILike("c.phone", pattern)
        .orWhereILike("c.city", pattern)
        .orWhereExists(db("yards as sy").whereRaw("sy.customer_id = c.id").whereNull("sy.archived_at").whereILike("sy.name", pattern).select(db.raw("1")));
      if (digits) w.orWhereRaw("regexp_replace(coalesce(c.phone, ''), '[^0-9]', '', 'g') like ?", [`%${digits}%`]);
    });
  }
  return q;
}

/** A page of the customers table, the number of customers found and their totals. */
export async function listCustomers(db: Knex, options: TableOptions<CustomerSort> = {}): Promise<CustomerPage> {
  const query = normalise(options, CUSTOMER_SORT_SQL, "name");
  const today = options.today ?? (await businessToday(db));
  const rows = customerRows(db, today, query.search);

  const summary = (await db
    .from(rows.clone().as("t"))
    .first(
      db.raw("count(*)::int as total"),
      db.raw("coalesce(sum(t.yards), 0)::int as yards"),
      db.raw("coalesce(sum(t.colonies), 0)::int as colonies"),
      db.raw("coalesce(sum(t.open_balance_cents), 0)::bigint as open_balance_cents"),
    )) as { total: number; yards: number; colonies: number; open_balance_cents: number };
  const page = clampPage(query.page, summary.total, query.pageSize);

  const found = await db
    .from(rows.as("t"))
    .orderByRaw(`${CUSTOMER_SORT_SQL[query.sort]} ${query.dir} nulls last, lower(t.name), t.id`)
    .limit(query.pageSize)
    .offset((page - 1) * query.pageSize)
    .select("t.*");

  return {
    ...query,
    page,
    total: summary.total,
    totals: { yards: summary.yards, colonies: summary.colonies, openBalanceCents: Number(summary.open_balance_cents) },
    rows: found.map((r) => ({
      id: r.id,
      name: r.name,
      email: r.email,
      phone: r.phone,
      town: r.town,
      yards: r.yards,
      colonies: r.colonies,
      openBalanceCents: Number(r.open_balance_cents),
      nextVisitDate: r.next_visit_date,
    })),
  };
}

// ------------------------------------------------------------------ yards

// Where a yard stands with bookings is defined once, in yard-booking-state.server.ts (the
// dispatcher's map reads the same definition).
export { YARD_BOOKING_STATES, type YardBookingState } from "./yard-booking-state.server";

const YARD_SORT_SQL = {
  yard: "lower(t.name)",
  customer: "lower(t.customer_name)",
  town: "lower(coalesce(t.address, t.town))",
  colonies: "t.colonies",
  brood: "t.brood_status",
  supersOff: "t.supers_off",
  state: `array_position(array[${YARD_BOOKING_STATES.map((s) => `'${s}'`).join(", ")}]::text[], t.booking_state)`,
  nextVisit: "t.next_visit_date",
} as const;
export type YardSort = keyof typeof YARD_SORT_SQL;
export const YARD_SORTS = Object.keys(YARD_SORT_SQL) as YardSort[];

export type YardListRow = {
  id: number;
  name: string;
  customerId: number;
  customerName: string;
  customerEmail: string;
  address: string | null;
  town: string | null;
  colonies: number;
  broodStatus: string;
  supersOff: boolean;
  bookingState: YardBookingState;
  nextVisitDate: string | null;
  requestedDate: string | null;
};
export type YardTotals = { colonies: number; broodYards: number; supersOffYards: number; bookedYards: number };
export type YardPage = TablePage<YardListRow, YardTotals, YardSort> & { state: YardBookingState | null };

function yardRows(db: Knex, today: string, search: string) {
  const q = db("yards as y")
    .join("customers as c", "c.id", "y.customer_id")
    .join(yardBookingStates(db, today).as("bs"), "bs.yard_id", "y.id")
    .whereNull("y.archived_at")
    .whereNull("c.anonymised_at")
    .select(
      "y.id",
      "y.name",
      "c.id as customer_id",
      "c.name as customer_name",
      "c.email as customer_email",
      "y.address",
      "c.city as town",
      "y.colony_count as colonies",
      "y.brood_status",
      "y.supers_off",
      "bs.next_visit_date",
      "bs.requested_date",
      "bs.booking_state",
    );
  if (search) {
    const pattern = containsPattern(search);
    const digits = phoneDigits(search);
    q.where((w) => {
      w.whereILike("y.name", pattern)
        .orWhereILike("c.name", pattern)
        .orWhereILike("c.email", pattern)
        .orWhereILike("c.phone", pattern)
        .orWhereILike("c.city", pattern)
        .orWhereILike("y.address", pattern);
      if (digits) w.orWhereRaw("regexp_replace(coalesce(c.phone, ''), '[^0-9]', '', 'g') like ?", [`%${digits}%`]);
    });
  }
  return q;
}

/** A page of the yards table (optionally only yards in one booking state), with the count and totals. */
export async function listYards(db: Knex, options: TableOptions<YardSort> & { state?: string | null } = {}): Promise<YardPage> {
  const query = normalise(options, YARD_SORT_SQL, "yard");
  const state = isYardBookingState(options.state) ? options.state : null;
  const today = options.today ?? (await businessToday(db));
  const filtered = () => {
    const q = db.from(yardRows(db, today, query.search).as("t"));
    if (state) q.where("t.booking_state", state);
    return q;
  };

  const summary = (await filtered().first(
    db.raw("count(*)::int as total"),
    db.raw("coalesce(sum(t.colonies), 0)::int as colonies"),
    db.raw("count(*) filter (where t.brood_status = 'brood')::int as brood_yards"),
    db.raw("count(*) filter (where t.supers_off)::int as supers_off_yards"),
    db.raw("count(*) filter (where t.booking_state = 'booked')::int as booked_yards"),
  )) as { total: number; colonies: number; brood_yards: number; supers_off_yards: number; booked_yards: number };
  const page = clampPage(query.page, summary.total, query.pageSize);

  const found = await filtered()
    .orderByRaw(`${YARD_SORT_SQL[query.sort]} ${query.dir} nulls last, lower(t.name), t.id`)
    .limit(query.pageSize)
    .offset((page - 1) * query.pageSize)
    .select("t.*");

  return {
    ...query,
    page,
    state,
    total: summary.total,
    totals: { colonies: summary.colonies, broodYards: summary.brood_yards, supersOffYards: summary.supers_off_yards, bookedYards: summary.booked_yards },
    rows: found.map((r) => ({
      id: r.id,
      name: r.name,
      customerId: r.customer_id,
      customerName: r.customer_name,
      customerEmail: r.customer_email,
      address: r.address,
      town: r.town,
      colonies: r.colonies,
      broodStatus: r.brood_status,
      supersOff: r.supers_off,
      bookingState: r.booking_state,
      nextVisitDate: r.next_visit_date,
      requestedDate: r.requested_date,
    })),
  };
}
