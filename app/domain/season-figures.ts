/**
 * The season dashboard's arithmetic: the period and its quick choices, ISO weeks, sums per
 * week, receivables by age, visits per crew-day, drive minutes per colony, mite load by area.
 * Pure TypeScript (no I/O); app/models/season-dashboard.server.ts reads the rows.
 *
 * Dates are service days or business-calendar days written YYYY-MM-DD; weeks are ISO 8601
 * weeks (Monday to Sunday; week 1 is the week with the year's first Thursday).
 */

import { z } from "zod";
import { addCalendarDays, calendarDaysBetween, isIsoDate } from "./courses";
import { initialBearingDegrees, type LatLng } from "./geo";
import { percentReduction } from "./mites";

// ---------------------------------------------------------------------------- period

/** A span of business days, both ends included. */
export interface DashboardPeriod {
  from: string;
  to: string;
}

export type PeriodPresetKey = "season" | "this-month" | "last-month";

export interface PeriodPreset extends DashboardPeriod {
  key: PeriodPresetKey;
  label: string;
}

/** The earliest first day the dashboard accepts. */
export const EARLIEST_DASHBOARD_DAY = "2000-01-01";
/** The longest period, in days (two years and a leap day). */
export const LONGEST_PERIOD_DAYS = 731;

function firstOfMonth(isoDate: string): string {
  return `${isoDate.slice(0, 7)}-01`;
}

/** The season so far (1 January of today's year to today), this month so far, and last month. */
export function periodPresets(today: string): PeriodPreset[] {
  if (!isIsoDate(today)) throw new RangeError(`today must be a date YYYY-MM-DD, got ${JSON.stringify(today)}`);
  const lastMonthEnd = addCalendarDays(firstOfMonth(today), -1);
  return [
    { key: "season", label: "Season so far", from: `${today.slice(0, 4)}-01-01`, to: today },
    { key: "this-month", label: "This month", from: firstOfMonth(today), to: today },
    { key: "last-month", label: "Last month", from: firstOfMonth(lastMonthEnd), to: lastMonthEnd },
  ];
}

/** The quick choice a period is exactly, if any. */
export function presetOf(period: DashboardPeriod, today: string): PeriodPresetKey | null {
  return periodPresets(today).find((p) => p.from === period.from && p.to === period.to)?.key ?? null;
}

export type PeriodFieldErrors = Partial<Record<"from" | "to", string>>;

export type PeriodReading =
  | { ok: true; period: DashboardPeriod; input: { from: string; to: string } }
  | { ok: false; fieldErrors: PeriodFieldErrors; input: { from: string; to: string } };

const blankToUndefined = (value: unknown) => (typeof value === "string" && value.trim() !== "" ? value.trim() : undefined);

/**
 * The period filter's schema: `from` and `to` as YYYY-MM-DD (what a date field sends), each
 * optional. A missing `to` is today; a missing `from` is 1 January of the last day's year.
 */
export function dashboardPeriodSchema(today: string) {
  const date = (what: string) =>
    z.preprocess(
      blankToUndefined,
      z
        .string({ error: `Enter ${what} as a date, for example ${today}.` })
        .refine(isIsoDate, { error: `Enter ${what} as a date, for example ${today}.` })
        .optional(),
    );
  return z
    .object({ from: date("the first day"), to: date("the last day") })
    .transform((value) => {
      const to = value.to ?? today;
      return { from: value.from ?? `${to.slice(0, 4)}-01-01`, to };
    })
    .superRefine((period, ctx) => {
      if (period.from < EARLIEST_DASHBOARD_DAY) {
        ctx.addIssue({ code: "custom", path: ["from"], message: `Choose a first day on or after ${EARLIEST_DASHBOARD_DAY}.` });
      } else if (period.from > today) {
        ctx.addIssue({ code: "custom", path: ["from"], message: `The first day cannot be after today (${today}).` });
      }
      if (period.to > today) {
        ctx.addIssue({ code: "custom", path: ["to"], message: `The last day cannot be after today (${today}).` });
      } else if (period.to < period.from) {
        ctx.addIssue({ code: "custom", path: ["to"], message: "The last day must be on or after the first day." });
      } else if (calendarDaysBetween(period.from, period.to) + 1 > LONGEST_PERIOD_DAYS) {
        ctx.addIssue({ code: "custom", path: ["from"], message: "Choose a period of at most two years." });
      }
    });
}

/** Reads the period from the page's query (`from`, `to`); field messages when it is not usable. */
export function readDashboardPeriod(params: { from?: string | null; to?: string | null }, today: string): PeriodReading {
  const input = { from: (params.from ?? "").trim(), to: (params.to ?? "").trim() };
  const result = dashboardPeriodSchema(today).safeParse({ from: input.from, to: input.to });
  if (result.success) return { ok: true, period: result.data, input };
  const fieldErrors: PeriodFieldErrors = {};
  for (const issue of result.error.issues) {
    const field = issue.path[0];
    if (field === "from" || field === "to") fieldErrors[field] ??= issue.message;
  }
  return { ok: false, fieldErrors, input };
}

// ---------------------------------------------------------------------------- ISO weeks

const MS_PER_DAY = 86_400_000;

function utcDayMs(isoDate: string): number {
  if (!isIsoDate(isoDate)) throw new RangeError(`not a date YYYY-MM-DD: ${JSON.stringify(isoDate)}`);
  return Date.UTC(Number(isoDate.slice(0, 4)), Number(isoDate.slice(5, 7)) - 1, Number(isoDate.slice(8, 10)));
}

function isoDateOfMs(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10);
}

export interface IsoWeek {
  /** "2026-W42" */
  key: string;
  /** The ISO week-numbering year (may differ from the calendar year at the year's ends). */
  isoYear: number;
  week: number;
  monday: string;
  sunday: string;
}

/** The ISO 8601 week a date falls in. */
export function isoWeekOf(isoDate: string): IsoWeek {
  const day = utcDayMs(isoDate);
  const weekday = (new Date(day).getUTCDay() + 6) % 7; // Monday 0 … Sunday 6
  const monday = day - weekday * MS_PER_DAY;
  const thursday = monday + 3 * MS_PER_DAY;
  const isoYear = new Date(thursday).getUTCFullYear();
  const week = 1 + Math.floor((thursday - Date.UTC(isoYear, 0, 1)) / MS_PER_DAY / 7);
  return {
    key: `${isoYear}-W${String(week).padStart(2, "0")}`,
    isoYear,
    week,
    monday: isoDateOfMs(monday),
    sunday: isoDateOfMs(monday + 6 * MS_PER_DAY),
  };
}

/** One ISO week of a period, cut to the period at its ends. */
export interface PeriodWeek extends IsoWeek {
  /** The first and last day of the week inside the period. */
  from: string;
  to: string;
  /** True when the period starts or ends inside this week. */
  partial: boolean;
}

/** Every ISO week that has at least one day in the period, in order. */
export function weeksOfPeriod(period: DashboardPeriod): PeriodWeek[] {
  if (period.to < period.from) throw new RangeError(`the period ends (${period.to}) before it starts (${period.from})`);
  const weeks: PeriodWeek[] = [];
  for (let monday = isoWeekOf(period.from).monday; monday <= period.to; monday = addCalendarDays(monday, 7)) {
    const week = isoWeekOf(monday);
    const from = week.monday < period.from ? period.from : week.monday;
    const to = week.sunday > period.to ? period.to : week.sunday;
    weeks.push({ ...week, from, to, partial: from !== week.monday || to !== week.sunday });
  }
  return weeks;
}

/** Figures for one week: the week and a sum per key. */
export type WeekTotals<K extends string> = { week: PeriodWeek } & Record<K, number>;

/**
 * Adds dated rows up per ISO week of the period: one entry per week (zeros where nothing
 * happened); rows dated outside the period are left out.
 */
export function sumByWeek<K extends string>(
  period: DashboardPeriod,
  rows: readonly ({ date: string } & Record<K, number>)[],
  keys: readonly K[],
): WeekTotals<K>[] {
  const weeks = weeksOfPeriod(period);
  const byKey = new Map<string, WeekTotals<K>>();
  const out = weeks.map((week) => {
    const entry = { week } as WeekTotals<K>;
    for (const key of keys) (entry as Record<K, number>)[key] = 0;
    byKey.set(week.key, entry);
    return entry;
  });
  for (const row of rows) {
    if (row.date < period.from || row.date > period.to) continue;
    const entry = byKey.get(isoWeekOf(row.date).key);
    if (!entry) continue;
    for (const key of keys) (entry as Record<K, number>)[key] += row[key];
  }
  return out;
}

/** The sum of one key over weekly entries. */
export function totalOf<K extends string>(weeks: readonly Record<K, number>[], key: K): number {
  return weeks.reduce((sum, week) => sum + week[key], 0);
}

// ---------------------------------------------------------------------------- treatment

/** Grams from hundredths of a gram (sums are kept in whole centigrams, so no floating-point drift). */
export function gramsFromCentigrams(centigrams: number): number {
  return Math.round(centigrams) / 100;
}

// ---------------------------------------------------------------------------- receivables

export const RECEIVABLE_BUCKETS = [
  { key: "not_due", label: "Not yet due", minDays: -Infinity, maxDays: 0 },
  { key: "1_30", label: "1–30 days past due", minDays: 1, maxDays: 30 },
  { key: "31_60", label: "31–60 days past due", minDays: 31, maxDays: 60 },
  { key: "61_90", label: "61–90 days past due", minDays: 61, maxDays: 90 },
  { key: "over_90", label: "Over 90 days past due", minDays: 91, maxDays: Infinity },
] as const;

export type ReceivableBucketKey = (typeof RECEIVABLE_BUCKETS)[number]["key"];

/** Days past the due date on a day: 0 on the due date itself, negative before it. */
export function daysPastDue(dueOn: string, asOf: string): number {
  return calendarDaysBetween(dueOn, asOf);
}

/** The age bucket of an open balance from its days past due. */
export function receivableBucketFor(days: number): ReceivableBucketKey {
  if (!Number.isInteger(days)) throw new RangeError(`days past due must be a whole number, got ${days}`);
  const bucket = RECEIVABLE_BUCKETS.find((b) => days >= b.minDays && days <= b.maxDays);
  return bucket!.key;
}

export interface ReceivableBucket {
  key: ReceivableBucketKey;
  label: string;
  invoices: number;
  cents: number;
}

export interface ReceivablesByAge {
  asOf: string;
  buckets: ReceivableBucket[];
  totalInvoices: number;
  totalCents: number;
}

/** Open balances on a day, bucketed by days past due (balances of 0 or less are not owed and left out). */
export function receivablesByAge(asOf: string, balances: readonly { dueOn: string; balanceCents: number }[]): ReceivablesByAge {
  const buckets: ReceivableBucket[] = RECEIVABLE_BUCKETS.map((b) => ({ key: b.key, label: b.label, invoices: 0, cents: 0 }));
  for (const item of balances) {
    if (!Number.isInteger(item.balanceCents)) throw new RangeError(`balance must be whole cents, got ${item.balanceCents}`);
    if (item.balanceCents <= 0) continue;
    const bucket = buckets.find((b) => b.key === receivableBucketFor(daysPastDue(item.dueOn, asOf)))!;
    bucket.invoices += 1;
    bucket.cents += item.balanceCents;
  }
  return {
    asOf,
    buckets,
    totalInvoices: buckets.reduce((n, b) => n + b.invoices, 0),
    totalCents: buckets.reduce((n, b) => n + b.cents, 0),
  };
}

// ---------------------------------------------------------------------------- crew-days

/** A quotient, or null when there is nothing to divide by. */
export function ratioOrNull(numerator: number, denominator: number): number | null {
  if (!Number.isFinite(numerator) || !Number.isFinite(denominator)) throw new RangeError("ratio of a non-finite number");
  return denominator > 0 ? numerator / denominator : null;
}

export interface CrewDayFigure {
  crewId: number;
  crewName: string;
  crewDays: number;
  visits: number;
  /** Finished visits per crew-day; null without crew-days. */
  average: number | null;
}

export interface VisitsPerCrewDay {
  crews: CrewDayFigure[];
  crewDays: number;
  visits: number;
  average: number | null;
}

/**
 * Visits per crew-day from one row per crew and service day with the visits finished that
 * day (a crew-day is a day on which the crew finished at least one visit; rows with 0 visits
 * are not crew-days). Crews in name order; the overall average is all visits ÷ all crew-days.
 */
export function visitsPerCrewDay(rows: readonly { crewId: number; crewName: string; serviceDate: string; visits: number }[]): VisitsPerCrewDay {
  const crews = new Map<number, CrewDayFigure & { days: Set<string> }>();
  for (const row of rows) {
    if (row.visits <= 0) continue;
    let crew = crews.get(row.crewId);
    if (!crew) {
      crew = { crewId: row.crewId, crewName: row.crewName, crewDays: 0, visits: 0, average: null, days: new Set() };
      crews.set(row.crewId, crew);
    }
    crew.days.add(row.serviceDate);
    crew.visits += row.visits;
  }
  const list: CrewDayFigure[] = [...crews.values()]
    .map(({ days, ...crew }) => ({ ...crew, crewDays: days.size, average: ratioOrNull(crew.visits, days.size) }))
    .sort((a, b) => a.crewName.localeCompare(b.crewName, "en") || a.crewId - b.crewId);
  const crewDays = list.reduce((n, c) => n + c.crewDays, 0);
  const visits = list.reduce((n, c) => n + c.visits, 0);
  return { crews: list, crewDays, visits, average: ratioOrNull(visits, crewDays) };
}

// ---------------------------------------------------------------------------- drive time

export interface DriveWeek {
  week: PeriodWeek;
  runs: number;
  driveMinutes: number;
  colonies: number;
  /** Planned drive minutes per colony treated; null when no colony was treated. */
  minutesPerColony: number | null;
}

export interface DrivePerColony {
  weeks: DriveWeek[];
  runs: number;
  driveMinutes: number;
  colonies: number;
  minutesPerColony: number | null;
}

/** Planned drive minutes per colony treated, per ISO week and over the period, from one row per run. */
export function drivePerColony(period: DashboardPeriod, runs: readonly { serviceDate: string; driveSeconds: number; colonies: number }[]): DrivePerColony {
  const weekly = sumByWeek(
    period,
    runs.map((r) => ({ date: r.serviceDate, runs: 1, driveSeconds: r.driveSeconds, colonies: r.colonies })),
    ["runs", "driveSeconds", "colonies"] as const,
  );
  const weeks = weekly.map((w) => ({
    week: w.week,
    runs: w.runs,
    driveMinutes: w.driveSeconds / 60,
    colonies: w.colonies,
    minutesPerColony: ratioOrNull(w.driveSeconds / 60, w.colonies),
  }));
  const driveSeconds = totalOf(weekly, "driveSeconds");
  const colonies = totalOf(weekly, "colonies");
  return { weeks, runs: totalOf(weekly, "runs"), driveMinutes: driveSeconds / 60, colonies, minutesPerColony: ratioOrNull(driveSeconds / 60, colonies) };
}

// ---------------------------------------------------------------------------- areas

/** Compass sectors of 45°, clockwise from north. */
export const COMPASS_SECTORS = ["North", "North-east", "East", "South-east", "South", "South-west", "West", "North-west"] as const;
export type CompassSector = (typeof COMPASS_SECTORS)[number];

/** The sector a bearing (degrees clockwise from north) falls in; each is centred on its direction. */
export function compassSectorOf(bearingDegrees: number): CompassSector {
  if (!Number.isFinite(bearingDegrees)) throw new RangeError(`bearing must be a number, got ${bearingDegrees}`);
  const normalised = ((bearingDegrees % 360) + 360) % 360;
  return COMPASS_SECTORS[Math.floor(((normalised + 22.5) % 360) / 45)];
}

const STATE_AND_ZIP = /^[A-Za-z]{2}(\s+\d{5}(-\d{4})?)?$/;
const ZIP_ONLY = /^\d{5}(-\d{4})?$/;
const COUNTRY = /^(usa|u\.s\.a\.|us|united states( of america)?)$/i;

/**
 * The town of an address written "street, town[, state ZIP][, country]": the last part
 * before the state, ZIP and country. Null when there is no such part (one part only, or the
 * part has digits, like a street or a route number).
 */
export function townFromAddress(address: string | null | undefined): string | null {
  if (!address) return null;
  const parts = address
    .split(",")
    .map((p) => p.trim().replace(/\s+/g, " "))
    .filter((p) => p !== "");
  while (parts.length > 0 && (COUNTRY.test(parts[parts.length - 1]) || ZIP_ONLY.test(parts[parts.length - 1]) || STATE_AND_ZIP.test(parts[parts.length - 1]))) {
    parts.pop();
  }
  if (parts.length < 2) return null;
  const town = parts[parts.length - 1];
  if (/\d/.test(town) || !/\p{L}/u.test(town)) return null;
  return town;
}

export type Area = { key: string; name: string; kind: "town" | "sector" | "unknown" };

/**
 * The area of a yard: its town from the address when the address names one; otherwise the
 * compass sector it lies in seen from the base (the middle of the crews' start points);
 * with no base either, "Town not known".
 */
export function areaOfYard(yard: { address: string | null; lat: number; lng: number }, base: LatLng | null): Area {
  const town = townFromAddress(yard.address);
  if (town) return { key: `town:${town.toLowerCase()}`, name: town, kind: "town" };
  if (base && (yard.lat !== base.lat || yard.lng !== base.lng)) {
    const sector = compassSectorOf(initialBearingDegrees(base, { lat: yard.lat, lng: yard.lng }));
    return { key: `sector:${sector}`, name: `${sector} of base`, kind: "sector" };
  }
  return { key: "unknown", name: "Town not known", kind: "unknown" };
}

/** The middle of some points (mean latitude and longitude; fine over a contractor's circuit), or null. */
export function middleOf(points: readonly LatLng[]): LatLng | null {
  if (points.length === 0) return null;
  return {
    lat: points.reduce((s, p) => s + p.lat, 0) / points.length,
    lng: points.reduce((s, p) => s + p.lng, 0) / points.length,
  };
}

// ---------------------------------------------------------------------------- mite load

/** Mites per 100 bees over several washes taken together: all mites ÷ all bees × 100; null without bees. */
export function pooledMitesPer100(mites: number, bees: number): number | null {
  if (!Number.isFinite(mites) || mites < 0) throw new RangeError(`mites must be ≥ 0, got ${mites}`);
  if (!Number.isFinite(bees) || bees < 0) throw new RangeError(`bees must be ≥ 0, got ${bees}`);
  return bees > 0 ? (mites * 100) / bees : null;
}

export interface WashTotals {
  washes: number;
  mites: number;
  bees: number;
  mitesPer100: number | null;
}

export interface AreaMiteLoad {
  area: Area;
  yards: number;
  before: WashTotals;
  after: WashTotals;
  /** Percent fewer mites per 100 bees after than before; null without both. */
  reductionPercent: number | null;
}

export interface MiteLoadByArea {
  areas: AreaMiteLoad[];
  before: WashTotals;
  after: WashTotals;
  reductionPercent: number | null;
}

function washTotals(washes: number, mites: number, bees: number): WashTotals {
  return { washes, mites, bees, mitesPer100: pooledMitesPer100(mites, bees) };
}

function reduction(before: WashTotals, after: WashTotals): number | null {
  if (before.mitesPer100 === null || after.mitesPer100 === null) return null;
  return percentReduction(before.mitesPer100, after.mitesPer100);
}

/**
 * Mite load before and after treatment per area, from wash totals per yard and phase
 * ("before": washes at a course's first round, before any vapor; "after": washes at later
 * rounds). Areas sorted: towns, then sectors, then unknown, each by name.
 */
export function miteLoadByArea(
  rows: readonly { yardId: number; address: string | null; lat: number; lng: number; phase: "before" | "after"; washes: number; mites: number; bees: number }[],
  base: LatLng | null,
): MiteLoadByArea {
  const areas = new Map<string, { area: Area; yards: Set<number>; before: [number, number, number]; after: [number, number, number] }>();
  for (const row of rows) {
    const area = areaOfYard(row, base);
    let entry = areas.get(area.key);
    if (!entry) {
      entry = { area, yards: new Set(), before: [0, 0, 0], after: [0, 0, 0] };
      areas.set(area.key, entry);
    }
    entry.yards.add(row.yardId);
    const sums = entry[row.phase];
    sums[0] += row.washes;
    sums[1] += row.mites;
    sums[2] += row.bees;
  }
  const order = { town: 0, sector: 1, unknown: 2 } as const;
  const list: AreaMiteLoad[] = [...areas.values()]
    .map((e) => {
      const before = washTotals(...e.before);
      const after = washTotals(...e.after);
      return { area: e.area, yards: e.yards.size, before, after, reductionPercent: reduction(before, after) };
    })
    .sort((a, b) => order[a.area.kind] - order[b.area.kind] || a.area.name.localeCompare(b.area.name, "en"));
  const sum = (phase: "before" | "after", i: 0 | 1 | 2) => [...areas.values()].reduce((n, e) => n + e[phase][i], 0);
  const before = washTotals(sum("before", 0), sum("before", 1), sum("before", 2));
  const after = washTotals(sum("after", 0), sum("after", 1), sum("after", 2));
  return { areas: list, before, after, reductionPercent: reduction(before, after) };
}
