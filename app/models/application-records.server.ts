import type { Knex } from "knex";
import { z } from "zod";
import { PAGE_SIZES } from "~/components/data-table/query";
import type { ApplicationRecordLine, RecordApplicator } from "~/domain/application-records-csv";
import { centigramsToGrams } from "~/domain/dose";
import { registrationNumberShown } from "~/domain/settings";
import { fieldErrors, type FieldErrors } from "~/forms/field-errors";
import { loadBusinessSettings } from "./settings.server";

// Application records: one line per finished visit (status done) — the day and clock times,
// the customer and their address, the yard and where it is, the colonies treated and the
// grams applied, the product and its registration number, who applied it and their licence
// number, and the weather note.
//
// The tallies are the truth: colonies treated are the visit's tallies with outcome
// "treated" (not the booking's or the visit's expected count) and grams are the sum of
// those tallies' doses, added in whole centigrams. The applicators are the crew members
// who recorded the treated tallies (tallies.recorded_by), in the order they started; when
// nothing was treated, or the recorders' accounts are gone, the member who finished the
// visit (visits.finished_by). The product and the applicators (names and licence numbers)
// are the ones kept on the visit when it was finished, so a later change of settings or of a
// crew member's account does not rewrite past records; settings and accounts as they are now
// only for visits finished before those were kept. The crew is the one whose run held the
// visit (stops → runs), else the crew that sent the finish (applied_changes). Anonymised
// customers stay, with the name and address anonymising left.

export const RECORD_SORTS = ["date", "customer", "yard", "crew", "colonies", "grams"] as const;
export type RecordSort = (typeof RECORD_SORTS)[number];
export const RECORD_PAGE_SIZE = 50;

/** The filters of a records query: a period (both days included), a crew, a customer. */
export type RecordFilters = {
  from: string;
  to: string;
  crewId: number | null;
  customerId: number | null;
};

export type RecordPaging = { sort: RecordSort; dir: "asc" | "desc"; page: number; pageSize: number };

export type RecordTotals = { visits: number; colonies: number; grams: number };

export type ApplicationRecords = {
  rows: ApplicationRecordLine[];
  /** Over everything the filters found, not only the page. */
  totals: RecordTotals;
  filters: RecordFilters;
  /** The paging applied (after clamping the page), or null when every row was read. */
  paging: RecordPaging | null;
  productName: string;
  productRegistrationNumber: string;
  timeZone: string;
};

// ---------------------------------------------------------------------------------------
// The filters from a URL

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

function isCalendarDate(text: string): boolean {
  const [y, m, d] = text.split("-").map(Number);
  const date = new Date(Date.UTC(y, m - 1, d));
  return y >= 1900 && y <= 2999 && date.getUTCFullYear() === y && date.getUTCMonth() === m - 1 && date.getUTCDate() === d;
}

const blankToUndefined = (value: unknown) => (typeof value === "string" && value.trim() === "" ? undefined : value);

const dateField = (which: string) =>
  z.preprocess(
    blankToUndefined,
    z
      .string()
      .trim()
      .regex(ISO_DATE, { error: `Enter the ${which} date as YYYY-MM-DD, for example 2026-11-10.` })
      .refine(isCalendarDate, { error: `The ${which} date is not a day of the calendar (from 1900 to 2999).` })
      .optional(),
  );

const idField = (what: string) =>
  z.preprocess(
    blankToUndefined,
    z
      .string()
      .trim()
      .regex(/^\d{1,12}$/, { error: `Choose a ${what} from the list.` })
      .transform(Number)
      .optional(),
  );

/** The records page's GET form (and the download links): every field optional. */
export const recordFiltersSchema = z
  .object({
    from: dateField("first"),
    to: dateField("last"),
    crew: idField("crew"),
    customer: idField("customer"),
    sort: z.enum(RECORD_SORTS).catch("date"),
    dir: z.enum(["asc", "desc"]).optional().catch(undefined),
    page: z.coerce.number().int().min(1).max(1_000_000).catch(1),
    size: z.coerce
      .number()
      .refine((n) => (PAGE_SIZES as readonly number[]).includes(n))
      .catch(RECORD_PAGE_SIZE),
  })
  .superRefine((value, ctx) => {
    const isDay = (d: string | undefined): d is string => d !== undefined && ISO_DATE.test(d) && isCalendarDate(d);
    if (isDay(value.from) && isDay(value.to) && value.to < value.from) {
      ctx.addIssue({ code: "custom", path: ["to"], message: "The last date must be on or after the first date." });
    }
  });

/** The default period: 1 January of the business's current year to its today. */
export function defaultRecordPeriod(today: string): { from: string; to: string } {
  return { from: `${today.slice(0, 4)}-01-01`, to: today };
}

export type RecordFilterOption = { id: number; name: string };
export type RecordFilterOptions = { crews: RecordFilterOption[]; customers: RecordFilterOption[] };

/** The crews (all, records are history) and the customers with at least one finished visit. */
export async function recordFilterOptions(db: Knex): Promise<RecordFilterOptions> {
  const crews = await db("crews").orderByRaw("lower(name), id").select("id", "name");
  const customers = await db("customers as c")
    .whereExists(db("visits as v").join("yards as y", "y.id", "v.yard_id").whereRaw("y.customer_id = c.id").where("v.status", "done").select(db.raw("1")))
    .orderByRaw("lower(c.name), c.id")
    .select("c.id", "c.name");
  return {
    crews: crews.map((c) => ({ id: Number(c.id), name: c.name })),
    customers: customers.map((c) => ({ id: Number(c.id), name: c.name })),
  };
}

export type RecordQuery =
  | { ok: true; filters: RecordFilters; paging: RecordPaging; values: Record<string, string>; options: RecordFilterOptions }
  | { ok: false; errors: FieldErrors; values: Record<string, string>; options: RecordFilterOptions };

/**
 * Reads and checks the filters from a URL's search parameters: dates as YYYY-MM-DD (the
 * default period is this year to date in the business's time zone), the last not before the
 * first, and a crew and customer that exist. `values` holds what the user entered (or the
 * defaults), to fill the form again.
 */
export async function readRecordQuery(db: Knex, params: URLSearchParams, today: string): Promise<RecordQuery> {
  const raw = Object.fromEntries(["from", "to", "crew", "customer", "sort", "dir", "page", "size"].map((k) => [k, params.get(k) ?? undefined]));
  const options = await recordFilterOptions(db);
  const period = defaultRecordPeriod(today);
  const values: Record<string, string> = {
    from: (raw.from ?? "").trim() || period.from,
    to: (raw.to ?? "").trim() || period.to,
    crew: (raw.crew ?? "").trim(),
    customer: (raw.customer ?? "").trim(),
  };
  const parsed = recordFiltersSchema.safeParse(raw);
  const errors: FieldErrors = parsed.success ? {} : fieldErrors(parsed.error);
  // A crew or customer not on the lists, said also when another field is wrong.
  const listed = (value: string, list: RecordFilterOption[]) => !/^\d{1,12}$/.test(value) || list.some((o) => o.id === Number(value));
  if (!errors.crew && values.crew && !listed(values.crew, options.crews)) errors.crew = "There is no such crew; choose one from the list.";
  if (!errors.customer && values.customer && !listed(values.customer, options.customers)) {
    errors.customer = "There are no records for that customer; choose one from the list.";
  }
  if (parsed.success && Object.keys(errors).length === 0) {
    const from = parsed.data.from ?? period.from;
    const to = parsed.data.to ?? period.to;
    if (to < from) {
      // One end given, and the other's default lies on its wrong side.
      if (parsed.data.to) errors.to = `The last date must be on or after the first date (${from}).`;
      else errors.from = `The first date must be on or before the last date (${to}).`;
      return { ok: false, errors, values, options };
    }
    const sort = parsed.data.sort;
    return {
      ok: true,
      filters: { from, to, crewId: parsed.data.crew ?? null, customerId: parsed.data.customer ?? null },
      paging: { sort, dir: parsed.data.dir ?? (sort === "date" || sort === "colonies" || sort === "grams" ? "desc" : "asc"), page: parsed.data.page, pageSize: parsed.data.size },
      values,
      options,
    };
  }
  return { ok: false, errors, values, options };
}

/** The filters as URL parameters for the download links ("" for none). */
export function recordFiltersSearch(filters: RecordFilters): string {
  const params = new URLSearchParams({ from: filters.from, to: filters.to });
  if (filters.crewId !== null) params.set("crew", String(filters.crewId));
  if (filters.customerId !== null) params.set("customer", String(filters.customerId));
  return params.toString();
}

// ---------------------------------------------------------------------------------------
// The records

// Whitelisted orders on the derived table "x"; the visit id breaks ties.
const SORT_SQL: Record<RecordSort, string> = {
  date: "x.service_date %DIR%, x.started_at %DIR% nulls last",
  customer: "lower(x.customer_name) %DIR%, x.service_date",
  yard: "lower(x.yard_name) %DIR%, x.service_date",
  crew: "lower(x.crew_name) %DIR% nulls last, x.service_date",
  colonies: "x.colonies_treated %DIR%, x.service_date",
  grams: "x.centigrams %DIR%, x.service_date",
};

type RecordSqlRow = {
  visit_id: number;
  service_date: string;
  started_at: Date | null;
  finished_at: Date | null;
  finished_by: number | null;
  weather_note: string | null;
  air_temp_c: string | null;
  product_name: string | null;
  product_registration_number: string | null;
  applicators: unknown;
  customer_id: number;
  customer_name: string;
  address_line: string | null;
  city: string | null;
  region: string | null;
  postal_code: string | null;
  anonymised_at: Date | null;
  yard_id: number;
  yard_name: string;
  yard_address: string | null;
  lat: number;
  lng: number;
  crew_id: number | null;
  crew_name: string | null;
  colonies_treated: number;
  colonies_skipped: number;
  centigrams: number;
};

/** Finished visits in the period with their tally totals and crew (a SQL text and its bindings). */
function recordsSql(filters: RecordFilters): { sql: string; bindings: (string | number)[] } {
  const bindings: (string | number)[] = [filters.from, filters.to];
  let where = "v.status = 'done' and v.service_date between ? and ?";
  if (filters.crewId !== null) {
    where += " and k.crew_id = ?";
    bindings.push(filters.crewId);
  }
  if (filters.customerId !== null) {
    where += " and c.id = ?";
    bindings.push(filters.customerId);
  }
  const sql = `
    select v.id as visit_id, v.service_date,
      coalesce(v.started_at, v.supers_confirmed_at) as started_at, v.finished_at, v.finished_by, v.weather_note, v.air_temp_c, v.product_name, v.product_registration_number, v.applicators,
      c.id as customer_id, c.name as customer_name, c.address_line, c.city, c.region, c.postal_code, c.anonymised_at,
      y.id as yard_id, y.name as yard_name, y.address as yard_address, y.lat, y.lng,
      k.crew_id, cr.name as crew_name,
      t.colonies_treated, t.colonies_skipped, t.centigrams
    from visits v
    join yards y on y.id = v.yard_id
    join customers c on c.id = y.customer_id
    cross join lateral (
      select count(*) filter (where tl.outcome = 'treated')::int as colonies_treated,
        count(*) filter (where tl.outcome = 'skipped')::int as colonies_skipped,
        coalesce(sum(round(tl.dose_grams * 100)) filter (where tl.outcome = 'treated'), 0)::bigint as centigrams
      from tallies tl where tl.visit_id = v.id
    ) t
    cross join lateral (
      select coalesce(
        (select r.crew_id from stops s join runs r on r.id = s.run_id where s.visit_id = v.id limit 1),
        (select ac.crew_id from applied_changes ac where ac.visit_id = v.id and ac.kind = 'finish' order by ac.applied_at, ac.key limit 1)
      ) as crew_id
    ) k
    left join crews cr on cr.id = k.crew_id
    where ${where}`;
  return { sql, bindings };
}

function joinAddress(parts: (string | null | undefined)[]): string {
  return parts
    .map((p) => p?.trim())
    .filter(Boolean)
    .join(", ");
}

/** HH:MM (24-hour) of an instant in a time zone. */
function clockInZone(instant: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat("en-GB", { timeZone, hour: "2-digit", minute: "2-digit", hourCycle: "h23" }).formatToParts(instant);
  const get = (type: string) => parts.find((p) => p.type === type)?.value ?? "00";
  return `${get("hour")}:${get("minute")}`;
}

// The applicators as the crew members' accounts say now: kept on the visit when it is
// finished (applicatorsWhenFinished), as an account's name and licence change later.
async function applicatorsFromAccounts(db: Knex, visits: { visit_id: number; finished_by: number | null }[]): Promise<Map<number, RecordApplicator[]>> {
  const out = new Map<number, RecordApplicator[]>();
  if (visits.length === 0) return out;
  const visitIds = visits.map((r) => r.visit_id);
  const recorders = (
    await db.raw<{ rows: { visit_id: number; name: string; applicator_licence: string | null }[] }>(
      `select t.visit_id, u.name, u.applicator_licence
       from tallies t join users u on u.id = t.recorded_by
       where t.visit_id = any(?::bigint[]) and t.outcome = 'treated'
       group by t.visit_id, u.id, u.name, u.applicator_licence
       order by t.visit_id, min(t.recorded_at), u.id`,
      [visitIds],
    )
  ).rows;
  for (const r of recorders) {
    const list = out.get(Number(r.visit_id)) ?? [];
    list.push({ name: r.name, licence: r.applicator_licence?.trim() || null });
    out.set(Number(r.visit_id), list);
  }
  const finisherIds = [...new Set(visits.filter((r) => !out.has(r.visit_id) && r.finished_by !== null).map((r) => Number(r.finished_by)))];
  if (finisherIds.length > 0) {
    const users = await db("users").whereIn("id", finisherIds).select("id", "name", "applicator_licence");
    const byId = new Map(users.map((u) => [Number(u.id), u]));
    for (const r of visits) {
      if (out.has(r.visit_id) || r.finished_by === null) continue;
      const u = byId.get(Number(r.finished_by));
      if (u) out.set(r.visit_id, [{ name: u.name, licence: u.applicator_licence?.trim() || null }]);
    }
  }
  return out;
}

/**
 * The applicators of a visit being finished by `finishedBy`, to keep on the visit
 * (visits.applicators): who recorded its treated tallies, else who finished it, with the
 * names and licence numbers on their accounts now.
 */
export async function applicatorsWhenFinished(db: Knex, visitId: number, finishedBy: number): Promise<RecordApplicator[]> {
  return (await applicatorsFromAccounts(db, [{ visit_id: visitId, finished_by: finishedBy }])).get(visitId) ?? [];
}

const keptApplicatorsSchema = z.array(z.object({ name: z.string(), licence: z.string().nullable() }));

/**
 * The applicators of each visit: the ones kept on the visit when it was finished; from the
 * accounts only for a visit finished without them (before they were kept).
 */
async function applicatorsByVisit(db: Knex, rows: RecordSqlRow[]): Promise<Map<number, RecordApplicator[]>> {
  const out = new Map<number, RecordApplicator[]>();
  const notKept: RecordSqlRow[] = [];
  for (const r of rows) {
    const kept = r.applicators === null ? null : keptApplicatorsSchema.safeParse(r.applicators);
    if (kept?.success) out.set(r.visit_id, kept.data);
    else notKept.push(r);
  }
  const live = await applicatorsFromAccounts(
    db,
    notKept.map((r) => ({ visit_id: r.visit_id, finished_by: r.finished_by === null ? null : Number(r.finished_by) })),
  );
  for (const [visitId, list] of live) out.set(visitId, list);
  return out;
}

/**
 * The application records for the filters, with totals over everything found (visits,
 * colonies treated, grams). With `paging`, one page of rows in that order; without, every
 * row in date order (for the CSV and PDF downloads).
 */
export async function applicationRecords(db: Knex, filters: RecordFilters, paging?: Partial<RecordPaging>): Promise<ApplicationRecords> {
  const settings = await loadBusinessSettings(db);
  const { sql, bindings } = recordsSql(filters);

  const sums = (
    await db.raw<{ rows: { visits: number; colonies: number; centigrams: number }[] }>(
      `select count(*)::int as visits, coalesce(sum(x.colonies_treated), 0)::int as colonies, coalesce(sum(x.centigrams), 0)::bigint as centigrams
       from (${sql}) x`,
      bindings,
    )
  ).rows[0];
  const totals: RecordTotals = { visits: sums.visits, colonies: sums.colonies, grams: centigramsToGrams(Number(sums.centigrams)) };

  let applied: RecordPaging | null = null;
  let pageSql = "";
  const pageBindings: (string | number)[] = [...bindings];
  if (paging) {
    const sort: RecordSort = paging.sort && (RECORD_SORTS as readonly string[]).includes(paging.sort) ? paging.sort : "date";
    const dir = paging.dir === "asc" ? "asc" : "desc";
    const pageSize = paging.pageSize && Number.isInteger(paging.pageSize) && paging.pageSize > 0 ? Math.min(paging.pageSize, 500) : RECORD_PAGE_SIZE;
    const lastPage = Math.max(1, Math.ceil(totals.visits / pageSize));
    const page = Math.min(Math.max(1, Math.floor(paging.page ?? 1)), lastPage);
    applied = { sort, dir, page, pageSize };
    pageSql = `order by ${SORT_SQL[sort].replaceAll("%DIR%", dir)}, x.visit_id ${dir} limit ? offset ?`;
    pageBindings.push(pageSize, (page - 1) * pageSize);
  } else {
    pageSql = "order by x.service_date, x.started_at nulls last, x.visit_id";
  }
  const rows = (await db.raw<{ rows: RecordSqlRow[] }>(`select x.* from (${sql}) x ${pageSql}`, pageBindings)).rows.map((r) => ({
    ...r,
    visit_id: Number(r.visit_id),
  }));
  const applicators = await applicatorsByVisit(db, rows);

  const tz = settings.timeZone;
  return {
    rows: rows.map((r) => ({
      visitId: r.visit_id,
      serviceDate: r.service_date,
      startedAt: r.started_at ? new Date(r.started_at).toISOString() : null,
      finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
      startTime: r.started_at ? clockInZone(new Date(r.started_at), tz) : null,
      finishTime: r.finished_at ? clockInZone(new Date(r.finished_at), tz) : null,
      timeZone: tz,
      customerId: Number(r.customer_id),
      customerName: r.customer_name,
      customerAddress: joinAddress([r.address_line, r.city, r.region, r.postal_code]),
      customerAnonymised: r.anonymised_at !== null,
      yardId: Number(r.yard_id),
      yardName: r.yard_name,
      yardAddress: r.yard_address?.trim() || null,
      lat: Number(r.lat),
      lng: Number(r.lng),
      crewId: r.crew_id === null ? null : Number(r.crew_id),
      crewName: r.crew_name,
      coloniesTreated: Number(r.colonies_treated),
      coloniesSkipped: Number(r.colonies_skipped),
      gramsApplied: centigramsToGrams(Number(r.centigrams)),
      // As recorded when the visit was finished; settings for visits finished before that was kept.
      productName: r.product_name ?? settings.productName,
      productRegistrationNumber: registrationNumberShown(r.product_registration_number ?? settings.productRegistrationNumber),
      applicators: applicators.get(r.visit_id) ?? [],
      weatherNote: r.weather_note?.trim() || null,
      airTempC: r.air_temp_c === null || r.air_temp_c === undefined ? null : Number(r.air_temp_c),
    })),
    totals,
    filters,
    paging: applied,
    productName: settings.productName,
    productRegistrationNumber: registrationNumberShown(settings.productRegistrationNumber),
    timeZone: tz,
  };
}

/** The names of the crew and customer filtered on, for report headings ("All crews" when none). */
export function recordFilterNames(filters: RecordFilters, options: RecordFilterOptions): { crew: string; customer: string } {
  return {
    crew: filters.crewId === null ? "All crews" : (options.crews.find((c) => c.id === filters.crewId)?.name ?? `Crew #${filters.crewId}`),
    customer: filters.customerId === null ? "All customers" : (options.customers.find((c) => c.id === filters.customerId)?.name ?? `Customer #${filters.customerId}`),
  };
}
