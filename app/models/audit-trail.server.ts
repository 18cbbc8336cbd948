import type { Knex } from "knex";
import {
  AUDIT_AREA_RULES,
  AUDIT_NAMED_ACTIONS,
  AUDIT_PAGE_SIZE,
  auditAreaOf,
  auditEntityLink,
  auditFieldChanges,
  describeAuditEntry,
  roleName,
  systemActorName,
  type AuditArea,
  type AuditEntityFacts,
  type AuditEntityLink,
  type AuditFieldChange,
  type AuditQuery,
} from "~/domain/audit-descriptions";
import { addCalendarDays } from "~/domain/courses";
import { zonedDateTimeToInstant } from "~/domain/zoned-time";
import { loadBusinessSettings } from "./settings.server";
import type { Role } from "./tables";

// The owner's audit trail: audit_log rows searched, filtered, sorted and paged in SQL (one
// query for the page, one for the count), then dressed for reading: who (the user's name
// and role, or System / Stripe), a sentence, the record with a link to its page, and the
// before → after fields. Days of the date filter are days in the business's time zone.

export type AuditFilters = Partial<AuditQuery> & { pageSize?: number };

export type AuditActor = { kind: "user"; id: number; name: string; email: string; role: Role; roleName: string } | { kind: "system"; name: "System" | "Stripe" };

export type AuditTrailRow = {
  id: number;
  /** ISO instant. */
  at: string;
  actor: AuditActor;
  action: string;
  area: AuditArea;
  entityType: string;
  entityId: string;
  description: string;
  entity: AuditEntityLink;
  changes: AuditFieldChange[];
};

export type AuditTrailPage = {
  rows: AuditTrailRow[];
  /** Entries the filters found (on every page). */
  total: number;
  /** The page shown (clamped to the last page) and its size. */
  page: number;
  pageSize: number;
  lastPage: number;
  timeZone: string;
  query: AuditQuery;
};

function escapeLike(text: string) {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/** The SQL condition for one area (or "other": no area's rule). */
function whereArea(q: Knex.QueryBuilder, area: AuditArea) {
  const rule = (w: Knex.QueryBuilder, r: { actions: readonly string[]; prefixes: readonly string[] }) => {
    if (r.actions.length) w.orWhereIn("a.action", [...r.actions]);
    for (const prefix of r.prefixes) {
      // A prefix never claims an action some area names whole (visit.* is split by name).
      w.orWhere((p) => {
        p.whereRaw("starts_with(a.action, ?)", [prefix]);
        if (AUDIT_NAMED_ACTIONS.length) p.whereNotIn("a.action", [...AUDIT_NAMED_ACTIONS]);
      });
    }
  };
  if (area === "other") {
    q.whereNot((w) => {
      for (const r of Object.values(AUDIT_AREA_RULES)) rule(w, r);
    });
  } else {
    q.where((w) => rule(w, AUDIT_AREA_RULES[area]));
  }
}

function filtered(db: Knex, query: AuditQuery, timeZone: string) {
  const q = db("audit_log as a").leftJoin("users as u", "u.id", "a.actor_user_id");
  const search = query.search.trim();
  if (search) {
    const like = `%${escapeLike(search)}%`;
    q.where((w) =>
      w
        .whereRaw("a.action ilike ?", [like])
        .orWhereRaw("a.entity_type ilike ?", [like])
        .orWhereRaw("replace(a.entity_type, '_', ' ') ilike ?", [like])
        .orWhereRaw("a.entity_id ilike ?", [like])
        .orWhereRaw("u.name ilike ?", [like])
        .orWhereRaw("u.email ilike ?", [like])
        .orWhereRaw("a.before::text ilike ?", [like])
        .orWhereRaw("a.after::text ilike ?", [like])
        // An invoice number finds the invoice's entries and the payments and refunds on it.
        .orWhereRaw(
          `exists (
            select 1 from invoices i
            where i.number ilike ?
              and ((a.entity_type = 'invoice' and a.entity_id = i.id::text)
                or (a.entity_type = 'payment' and a.entity_id in (select p.id::text from payments p where p.invoice_id = i.id))
                or (a.entity_type = 'refund' and a.entity_id in (
                  select r.id::text from refunds r join payments p on p.id = r.payment_id where p.invoice_id = i.id))))`,
          [like],
        ),
    );
  }
  if (query.area !== "all") whereArea(q, query.area);
  if (query.actor === "system") q.whereNull("a.actor_user_id");
  else if (typeof query.actor === "number") q.where("a.actor_user_id", query.actor);
  if (query.from) q.where("a.at", ">=", zonedDateTimeToInstant(query.from, 0, timeZone));
  if (query.to) q.where("a.at", "<", zonedDateTimeToInstant(addCalendarDays(query.to, 1), 0, timeZone));
  return q;
}

type AuditQueryRow = {
  id: number;
  at: Date;
  actor_user_id: number | null;
  action: string;
  entity_type: string;
  entity_id: string;
  before: unknown;
  after: unknown;
  user_name: string | null;
  user_email: string | null;
  user_role: Role | null;
};

const numericIds = (ids: Iterable<string | number | null | undefined>) => [
  ...new Set([...ids].filter((id): id is string | number => id !== null && id !== undefined && /^\d{1,15}$/.test(String(id))).map(Number)),
];

const field = (value: unknown, key: string): unknown => (value !== null && typeof value === "object" ? (value as Record<string, unknown>)[key] : undefined);

/** Facts about each row's record for its label, link and sentence, a few queries for the whole page. */
async function entityFacts(db: Knex, rows: AuditQueryRow[]): Promise<Map<number, AuditEntityFacts>> {
  const of = (type: string) => rows.filter((r) => r.entity_type === type);
  const paymentIds = numericIds(of("payment").map((r) => r.entity_id));
  const refundIds = numericIds(of("refund").map((r) => r.entity_id));
  const visitIds = numericIds(of("visit").map((r) => r.entity_id));
  const bookingIds = numericIds(of("booking").map((r) => r.entity_id));
  const courseIds = numericIds(of("course").map((r) => r.entity_id));
  const runIds = numericIds(of("run").map((r) => r.entity_id));
  const yardIds = numericIds(of("yard").map((r) => r.entity_id));
  const colonyIds = numericIds(of("colony").map((r) => r.entity_id));
  const userIds = numericIds(of("user").map((r) => r.entity_id));

  const [payments, refunds, visits, bookings, courses, runs, yards, colonies, users] = await Promise.all([
    paymentIds.length ? db("payments").whereIn("id", paymentIds).select("id", "invoice_id") : [],
    refundIds.length ? db("refunds as r").join("payments as p", "p.id", "r.payment_id").whereIn("r.id", refundIds).select("r.id", "p.invoice_id") : [],
    visitIds.length ? db("visits as v").join("yards as y", "y.id", "v.yard_id").whereIn("v.id", visitIds).select("v.id", "y.id as yard_id", "y.name as yard_name") : [],
    bookingIds.length
      ? db("bookings as b")
          .join("yards as y", "y.id", "b.yard_id")
          .whereIn("b.id", bookingIds)
          .select(
            "b.id",
            "y.id as yard_id",
            "y.name as yard_name",
            db.raw(
              "(select v.id from courses c join visits v on v.course_id = c.id where c.booking_id = b.id order by v.round_number, v.id limit 1) as visit_id",
            ),
          )
      : [],
    courseIds.length ? db("courses as c").join("yards as y", "y.id", "c.yard_id").whereIn("c.id", courseIds).select("c.id", "y.id as yard_id", "y.name as yard_name") : [],
    runIds.length ? db("runs as r").join("crews as c", "c.id", "r.crew_id").whereIn("r.id", runIds).select("r.id", "r.service_date", "c.name as crew_name") : [],
    yardIds.length ? db("yards").whereIn("id", yardIds).select("id", "name") : [],
    colonyIds.length ? db("colonies as c").join("yards as y", "y.id", "c.yard_id").whereIn("c.id", colonyIds).select("c.id", "c.label", "y.id as yard_id", "y.name as yard_name") : [],
    userIds.length ? db("users").whereIn("id", userIds).select("id", "name") : [],
  ]);

  const byId = <T extends { id: number }>(list: T[]) => new Map(list.map((x) => [Number(x.id), x]));
  const paymentInvoice = new Map((payments as { id: number; invoice_id: number }[]).map((p) => [Number(p.id), Number(p.invoice_id)]));
  const refundInvoice = new Map((refunds as { id: number; invoice_id: number }[]).map((r) => [Number(r.id), Number(r.invoice_id)]));
  const visitMap = byId(visits as { id: number; yard_id: number; yard_name: string }[]);
  const bookingMap = byId(bookings as { id: number; yard_id: number; yard_name: string; visit_id: number | null }[]);
  const courseMap = byId(courses as { id: number; yard_id: number; yard_name: string }[]);
  const runMap = byId(runs as { id: number; service_date: string; crew_name: string }[]);
  const yardMap = byId(yards as { id: number; name: string }[]);
  const colonyMap = byId(colonies as { id: number; label: string; yard_id: number; yard_name: string }[]);
  const userMap = byId(users as { id: number; name: string }[]);

  // The invoice each row concerns, then their numbers in one query.
  const invoiceOf = new Map<number, number>();
  for (const r of rows) {
    const id = /^\d{1,15}$/.test(r.entity_id) ? Number(r.entity_id) : null;
    let invoiceId: number | undefined;
    if (r.entity_type === "invoice" && id !== null) invoiceId = id;
    else if (r.entity_type === "payment" && id !== null) invoiceId = paymentInvoice.get(id) ?? (numericIds([field(r.after, "invoiceId") as string])[0] as number | undefined);
    else if (r.entity_type === "refund" && id !== null) invoiceId = refundInvoice.get(id);
    if (invoiceId !== undefined) invoiceOf.set(Number(r.id), invoiceId);
  }
  const invoiceIds = numericIds(invoiceOf.values());
  const invoices = invoiceIds.length ? await db("invoices").whereIn("id", invoiceIds).select("id", "number") : [];
  const invoiceNumber = new Map(invoices.map((i) => [Number(i.id), i.number]));

  const out = new Map<number, AuditEntityFacts>();
  for (const r of rows) {
    const id = /^\d{1,15}$/.test(r.entity_id) ? Number(r.entity_id) : -1;
    const invoiceId = invoiceOf.get(Number(r.id)) ?? null;
    const facts: AuditEntityFacts = { invoiceId, invoiceNumber: invoiceId !== null ? (invoiceNumber.get(invoiceId) ?? null) : null };
    switch (r.entity_type) {
      case "visit": {
        const v = visitMap.get(id);
        if (v) Object.assign(facts, { visitId: id, yardId: Number(v.yard_id), yardName: v.yard_name });
        break;
      }
      case "booking": {
        const b = bookingMap.get(id);
        if (b) Object.assign(facts, { visitId: b.visit_id === null ? null : Number(b.visit_id), yardId: Number(b.yard_id), yardName: b.yard_name });
        break;
      }
      case "course": {
        const c = courseMap.get(id);
        if (c) Object.assign(facts, { yardId: Number(c.yard_id), yardName: c.yard_name });
        break;
      }
      case "run": {
        const run = runMap.get(id);
        const fromAfter = field(r.after, "service_date");
        facts.serviceDate = run?.service_date ?? (typeof fromAfter === "string" ? fromAfter : null);
        facts.crewName = run?.crew_name ?? null;
        break;
      }
      case "yard": {
        const y = yardMap.get(id);
        if (y) Object.assign(facts, { yardId: id, yardName: y.name });
        break;
      }
      case "colony": {
        const c = colonyMap.get(id);
        if (c) Object.assign(facts, { colonyLabel: c.label, yardId: Number(c.yard_id), yardName: c.yard_name });
        break;
      }
      case "user":
        facts.userName = userMap.get(id)?.name ?? null;
        break;
    }
    out.set(Number(r.id), facts);
  }
  return out;
}

/**
 * One page of the audit trail: entries matching the filters (free text over the action, the
 * record, the actor's name and e-mail and the before/after values; area; actor or "system"
 * for entries without a user; first and last day in the business's time zone), newest or
 * oldest first, with the total found.
 */
export async function searchAuditTrail(db: Knex, filters: AuditFilters = {}): Promise<AuditTrailPage> {
  const query: AuditQuery = {
    search: filters.search ?? "",
    area: filters.area ?? "all",
    actor: filters.actor ?? "all",
    from: filters.from ?? null,
    to: filters.to ?? null,
    sort: filters.sort === "oldest" ? "oldest" : "newest",
    page: filters.page && Number.isSafeInteger(filters.page) && filters.page > 0 ? filters.page : 1,
  };
  const pageSize = filters.pageSize && filters.pageSize > 0 ? Math.min(filters.pageSize, 500) : AUDIT_PAGE_SIZE;
  const { timeZone } = await loadBusinessSettings(db);

  const counted = (await filtered(db, query, timeZone).first(db.raw("count(*)::int as total"))) as unknown as { total: number };
  const total = Number(counted.total);
  const lastPage = Math.max(1, Math.ceil(total / pageSize));
  const page = Math.min(query.page, lastPage);
  const dir = query.sort === "oldest" ? "asc" : "desc";

  const rows = (await filtered(db, query, timeZone)
    .select("a.id", "a.at", "a.actor_user_id", "a.action", "a.entity_type", "a.entity_id", "a.before", "a.after", "u.name as user_name", "u.email as user_email", "u.role as user_role")
    .orderBy([
      { column: "a.at", order: dir },
      { column: "a.id", order: dir },
    ])
    .limit(pageSize)
    .offset((page - 1) * pageSize)) as AuditQueryRow[];

  const facts = await entityFacts(db, rows);
  return {
    rows: rows.map((r) => {
      const entity = facts.get(Number(r.id)) ?? {};
      const actor: AuditActor =
        r.actor_user_id !== null && r.user_role !== null
          ? { kind: "user", id: Number(r.actor_user_id), name: r.user_name ?? "", email: r.user_email ?? "", role: r.user_role, roleName: roleName(r.user_role) }
          : { kind: "system", name: systemActorName(r.action) };
      return {
        id: Number(r.id),
        at: new Date(r.at).toISOString(),
        actor,
        action: r.action,
        area: auditAreaOf(r.action),
        entityType: r.entity_type,
        entityId: r.entity_id,
        description: describeAuditEntry({
          action: r.action,
          entityType: r.entity_type,
          entityId: r.entity_id,
          before: r.before,
          after: r.after,
          invoiceNumber: entity.invoiceNumber,
        }),
        entity: auditEntityLink(r.entity_type, r.entity_id, entity),
        changes: auditFieldChanges(r.before, r.after, timeZone),
      };
    }),
    total,
    page,
    pageSize,
    lastPage,
    timeZone,
    query: { ...query, page },
  };
}

/** The people who appear in the audit trail, for the "who" filter (by name). */
export async function auditActors(db: Knex): Promise<{ id: number; name: string; role: Role; roleName: string }[]> {
  const rows = await db("users as u")
    .whereIn("u.id", db("audit_log").whereNotNull("actor_user_id").distinct("actor_user_id"))
    .orderByRaw("lower(u.name), u.id")
    .select("u.id", "u.name", "u.role");
  return rows.map((r) => ({ id: Number(r.id), name: r.name, role: r.role, roleName: roleName(r.role) }));
}
