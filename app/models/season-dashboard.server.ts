import type { Knex } from "knex";
import {
  drivePerColony,
  gramsFromCentigrams,
  middleOf,
  miteLoadByArea,
  receivablesByAge,
  sumByWeek,
  totalOf,
  visitsPerCrewDay,
  type DashboardPeriod,
  type DrivePerColony,
  type MiteLoadByArea,
  type PeriodWeek,
  type ReceivablesByAge,
  type VisitsPerCrewDay,
} from "~/domain/season-figures";
import { loadBusinessSettings } from "./settings.server";

// The season dashboard: one query per figure over a period of business days (both ends
// included), the arithmetic in app/domain/season-figures.ts. What each figure counts:
//
// - Treatment: tallies marked treated at finished visits (status done) whose service day is
//   in the period; grams are their doses. Per ISO week of the service day.
// - Money: invoices issued in the period (by issued_on), void ones left out, at their totals;
//   payments by the business day they were received on (in the business's time zone), and
//   refunds by the day they were made. Per ISO week.
// - Receivables at the end of the period: every invoice issued on or before the last day and
//   not void, at its total less the payments received by the end of that day (refunds are
//   money given back by agreement and do not reopen a debt), bucketed by days past due then.
// - Visits per crew-day: finished visits on the stops of each crew's runs in the period; a
//   crew-day is a run (a crew on a service day) with at least one finished visit.
// - Drive per colony: the planned drive time of those runs (the whole day, back to the end
//   point) over the colonies treated at their finished visits. Per ISO week.
// - Mite load by area: washes (tallies with mites and bees sampled) at finished visits in the
//   period; "before" is a course's first round, "after" its later rounds; pooled as all mites
//   ÷ all bees × 100 per area (see areaOfYard for the areas).

export type { DashboardPeriod } from "~/domain/season-figures";

type WeekRow = { week: PeriodWeek };

export type TreatmentWeek = WeekRow & { colonies: number; grams: number };
export type TreatmentByWeek = { weeks: TreatmentWeek[]; colonies: number; grams: number };

export type MoneyWeek = WeekRow & { invoicedCents: number; invoices: number; receivedCents: number; payments: number; refundedCents: number };
export type MoneyByWeek = { weeks: MoneyWeek[]; invoicedCents: number; invoices: number; receivedCents: number; payments: number; refundedCents: number };

export type SeasonHeadline = {
  colonies: number;
  grams: number;
  invoicedCents: number;
  receivedCents: number;
  receivablesCents: number;
};

export type SeasonDashboard = {
  period: DashboardPeriod;
  headline: SeasonHeadline;
  treatment: TreatmentByWeek;
  money: MoneyByWeek;
  receivables: ReceivablesByAge;
  crewDays: VisitsPerCrewDay;
  drive: DrivePerColony;
  mites: MiteLoadByArea;
};

async function businessTimeZone(db: Knex, timeZone?: string): Promise<string> {
  return timeZone ?? (await loadBusinessSettings(db)).timeZone;
}

/** Colonies treated and grams of oxalic acid dihydrate used, per ISO week. */
export async function treatmentByWeek(db: Knex, period: DashboardPeriod): Promise<TreatmentByWeek> {
  const rows = (await db("tallies as t")
    .join("visits as v", "v.id", "t.visit_id")
    .where("v.status", "done")
    .where("t.outcome", "treated")
    .whereBetween("v.service_date", [period.from, period.to])
    .groupBy("v.service_date")
    .select("v.service_date as date", db.raw("count(*)::int as colonies"), db.raw("round(sum(t.dose_grams) * 100)::bigint as centigrams"))) as unknown as {
    date: string;
    colonies: number;
    centigrams: number;
  }[];
  const weekly = sumByWeek(
    period,
    rows.map((r) => ({ date: r.date, colonies: Number(r.colonies), centigrams: Number(r.centigrams) })),
    ["colonies", "centigrams"] as const,
  );
  return {
    weeks: weekly.map((w) => ({ week: w.week, colonies: w.colonies, grams: gramsFromCentigrams(w.centigrams) })),
    colonies: totalOf(weekly, "colonies"),
    grams: gramsFromCentigrams(totalOf(weekly, "centigrams")),
  };
}

/** Invoice totals issued (void left out), payments received and refunds made, per ISO week. */
export async function moneyByWeek(db: Knex, period: DashboardPeriod, timeZone?: string): Promise<MoneyByWeek> {
  const zone = await businessTimeZone(db, timeZone);
  const [invoiced, received, refunded] = await Promise.all([
    db("invoices")
      .whereNot("status", "void")
      .whereBetween("issued_on", [period.from, period.to])
      .groupBy("issued_on")
      .select("issued_on as date", db.raw("sum(total_cents)::bigint as cents"), db.raw("count(*)::int as n")),
    db("payments")
      .whereRaw("(received_at at time zone ?)::date between ?::date and ?::date", [zone, period.from, period.to])
      .groupByRaw("1")
      .select(db.raw("to_char((received_at at time zone ?)::date, 'YYYY-MM-DD') as date", [zone]), db.raw("sum(amount_cents)::bigint as cents"), db.raw("count(*)::int as n")),
    db("refunds")
      .whereRaw("(created_at at time zone ?)::date between ?::date and ?::date", [zone, period.from, period.to])
      .groupByRaw("1")
      .select(db.raw("to_char((created_at at time zone ?)::date, 'YYYY-MM-DD') as date", [zone]), db.raw("sum(amount_cents)::bigint as cents")),
  ]);
  type Row = { date: string; cents: number; n?: number };
  const rows = [
    ...(invoiced as unknown as Row[]).map((r) => ({ date: r.date, invoicedCents: Number(r.cents), invoices: Number(r.n), receivedCents: 0, payments: 0, refundedCents: 0 })),
    ...(received as unknown as Row[]).map((r) => ({ date: r.date, invoicedCents: 0, invoices: 0, receivedCents: Number(r.cents), payments: Number(r.n), refundedCents: 0 })),
    ...(refunded as unknown as Row[]).map((r) => ({ date: r.date, invoicedCents: 0, invoices: 0, receivedCents: 0, payments: 0, refundedCents: Number(r.cents) })),
  ];
  const keys = ["invoicedCents", "invoices", "receivedCents", "payments", "refundedCents"] as const;
  const weeks = sumByWeek(period, rows, keys);
  return {
    weeks,
    invoicedCents: totalOf(weeks, "invoicedCents"),
    invoices: totalOf(weeks, "invoices"),
    receivedCents: totalOf(weeks, "receivedCents"),
    payments: totalOf(weeks, "payments"),
    refundedCents: totalOf(weeks, "refundedCents"),
  };
}

/** What was owed at the end of the period's last day, by days past due. */
export async function receivablesAtEnd(db: Knex, period: DashboardPeriod, timeZone?: string): Promise<ReceivablesByAge> {
  const zone = await businessTimeZone(db, timeZone);
  const rows = (await db("invoices as i")
    .whereNot("i.status", "void")
    .where("i.issued_on", "<=", period.to)
    .select(
      "i.due_on",
      db.raw(
        `(i.total_cents - coalesce((select sum(p.amount_cents) from payments p
            where p.invoice_id = i.id and (p.received_at at time zone ?)::date <= ?::date), 0))::bigint as balance_cents`,
        [zone, period.to],
      ),
    )) as unknown as { due_on: string; balance_cents: number }[];
  return receivablesByAge(
    period.to,
    rows.map((r) => ({ dueOn: r.due_on, balanceCents: Number(r.balance_cents) })),
  );
}

/** Finished visits per crew-day: each crew's crew-days and visits, and the average over all. */
export async function visitsPerCrewDayIn(db: Knex, period: DashboardPeriod): Promise<VisitsPerCrewDay> {
  const rows = (await db("runs as r")
    .join("crews as c", "c.id", "r.crew_id")
    .join("stops as s", "s.run_id", "r.id")
    .join("visits as v", "v.id", "s.visit_id")
    .where("v.status", "done")
    .whereBetween("r.service_date", [period.from, period.to])
    .groupBy("r.crew_id", "c.name", "r.service_date")
    .select("r.crew_id", "c.name", "r.service_date", db.raw("count(*)::int as visits"))) as unknown as {
    crew_id: number;
    name: string;
    service_date: string;
    visits: number;
  }[];
  return visitsPerCrewDay(rows.map((r) => ({ crewId: Number(r.crew_id), crewName: r.name, serviceDate: r.service_date, visits: Number(r.visits) })));
}

/** Planned drive minutes of the worked runs over the colonies treated on them, per ISO week. */
export async function driveMinutesPerColony(db: Knex, period: DashboardPeriod): Promise<DrivePerColony> {
  const rows = (await db("runs as r")
    .whereBetween("r.service_date", [period.from, period.to])
    .whereExists((q) => q.select(db.raw("1")).from("stops as s").join("visits as v", "v.id", "s.visit_id").whereRaw("s.run_id = r.id").where("v.status", "done"))
    .select(
      "r.service_date",
      "r.drive_seconds",
      db.raw(
        `(select count(*) from stops s join visits v on v.id = s.visit_id join tallies t on t.visit_id = v.id
           where s.run_id = r.id and v.status = 'done' and t.outcome = 'treated')::int as colonies`,
      ),
    )) as unknown as { service_date: string; drive_seconds: number; colonies: number }[];
  return drivePerColony(
    period,
    rows.map((r) => ({ serviceDate: r.service_date, driveSeconds: Number(r.drive_seconds), colonies: Number(r.colonies) })),
  );
}

/** Mite load (mites per 100 bees) before and after treatment, per area. */
export async function miteLoadByAreaIn(db: Knex, period: DashboardPeriod): Promise<MiteLoadByArea> {
  const [rows, crews] = await Promise.all([
    db("tallies as t")
      .join("visits as v", "v.id", "t.visit_id")
      .join("yards as y", "y.id", "v.yard_id")
      .where("v.status", "done")
      .whereBetween("v.service_date", [period.from, period.to])
      .whereNotNull("t.mites")
      .whereNotNull("t.bees_sampled")
      .groupBy("y.id", "y.address", "y.lat", "y.lng", db.raw("(v.round_number = 1)"))
      .select(
        "y.id as yard_id",
        "y.address",
        "y.lat",
        "y.lng",
        db.raw("(v.round_number = 1) as first_round"),
        db.raw("count(*)::int as washes"),
        db.raw("sum(t.mites)::bigint as mites"),
        db.raw("sum(t.bees_sampled)::bigint as bees"),
      ) as unknown as Promise<{ yard_id: number; address: string | null; lat: number; lng: number; first_round: boolean; washes: number; mites: number; bees: number }[]>,
    db("crews").where("active", true).select("start_lat", "start_lng"),
  ]);
  const base = middleOf(crews.map((c) => ({ lat: Number(c.start_lat), lng: Number(c.start_lng) })));
  return miteLoadByArea(
    rows.map((r) => ({
      yardId: Number(r.yard_id),
      address: r.address,
      lat: Number(r.lat),
      lng: Number(r.lng),
      phase: r.first_round ? ("before" as const) : ("after" as const),
      washes: Number(r.washes),
      mites: Number(r.mites),
      bees: Number(r.bees),
    })),
    base,
  );
}

/** Every figure of the season dashboard for a period, with the headline numbers. */
export async function seasonDashboard(db: Knex, period: DashboardPeriod, options: { timeZone?: string } = {}): Promise<SeasonDashboard> {
  const timeZone = await businessTimeZone(db, options.timeZone);
  const [treatment, money, receivables, crewDays, drive, mites] = await Promise.all([
    treatmentByWeek(db, period),
    moneyByWeek(db, period, timeZone),
    receivablesAtEnd(db, period, timeZone),
    visitsPerCrewDayIn(db, period),
    driveMinutesPerColony(db, period),
    miteLoadByAreaIn(db, period),
  ]);
  return {
    period,
    headline: {
      colonies: treatment.colonies,
      grams: treatment.grams,
      invoicedCents: money.invoicedCents,
      receivedCents: money.receivedCents,
      receivablesCents: receivables.totalCents,
    },
    treatment,
    money,
    receivables,
    crewDays,
    drive,
    mites,
  };
}
