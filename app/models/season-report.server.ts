import type { Knex } from "knex";
import { z } from "zod";
import { formatServiceDate } from "~/components/format";
import { atOrAboveThreshold, miteLoadLevel, mitesPer100Bees, percentReduction, thresholdOn, type MiteLoadLevel, type MiteThreshold } from "~/domain/mites";
import type { BusinessSettings } from "~/domain/settings";
import { roundTo } from "~/domain/units";
import type { VisitRow } from "./tables";

// A customer's season report: per yard, the treatment rounds done in one calendar year,
// the colonies treated at each, the mite counts the crew took, and what comes next.
// The page (/portal/season) and the PDF (/portal/season/pdf) show the same object.
//
// Mite counts are per colony in the tallies (mites found in a wash of `bees_sampled` bees).
// A round's figure is the plain average of the colonies' mites per 100 bees, so each
// colony that was washed counts once, whatever its sample size; colonies without a count
// are left out of the average (and counted apart, so the reader sees how many were washed).

/** `?year=` on the report and its PDF: a four-digit year; absent means the business's current year. */
export const seasonYearSchema = z.object({
  year: z
    .string()
    .trim()
    .regex(/^\d{4}$/, { error: "Choose a year such as 2026." })
    .transform(Number)
    .refine((y) => y >= 2000 && y <= 2100, { error: "Choose a year between 2000 and 2100." })
    .optional(),
});

/** The year asked for in a URL, or the fallback; null when `year` is there but not a year. */
export function seasonYearFromUrl(url: URL, fallback: number): number | null {
  const raw = url.searchParams.get("year");
  const parsed = seasonYearSchema.safeParse({ year: raw === null || raw === "" ? undefined : raw });
  if (!parsed.success) return null;
  return parsed.data.year ?? fallback;
}

export type SeasonRound = {
  visitId: number;
  serviceDate: string;
  roundNumber: number;
  roundsPlanned: number;
  coloniesTreated: number;
  coloniesSkipped: number;
  /** Colonies with a mite count at this visit. */
  coloniesCounted: number;
  /** Average of the counted colonies' mites per 100 bees, to 0.01; null when none was counted. */
  averageMitesPer100: number | null;
  /** The action threshold in force on the visit's date (mites per 100 bees); null if settings leave the month out. */
  threshold: number | null;
  /** The average (to one decimal, as shown) against the threshold; null without an average or a threshold. */
  level: MiteLoadLevel | null;
  /** Counted colonies at or above the threshold. */
  coloniesAtOrAboveThreshold: number;
  /** Against the last earlier round with counts this season: mites per 100 bees more (+) or fewer (−), to 0.01. */
  changeFromPrevious: number | null;
  /** Percent fewer mites than at that previous round (negative when the count rose), to 0.1. */
  percentFewerThanPrevious: number | null;
  /** The same figures in words, shown on the page and in the PDF. */
  text: { mites: string; verdict: string; change: string };
};

export type SeasonNextVisit = {
  visitId: number;
  serviceDate: string;
  roundNumber: number;
  roundsPlanned: number;
  status: VisitRow["status"];
};

export type SeasonYard = {
  yardId: number;
  name: string;
  colonies: number;
  archived: boolean;
  roundsDone: number;
  /** Sum over the rounds of the colonies treated (a colony treated in 3 rounds counts 3 times). */
  treatmentsGiven: number;
  rounds: SeasonRound[];
  /** The first and latest rounds with mite counts this season, and the change between them. */
  firstCount: { serviceDate: string; averageMitesPer100: number } | null;
  latestCount: { serviceDate: string; averageMitesPer100: number } | null;
  percentFewerOverSeason: number | null;
  /** The yard's next open visit from today on (or a deferred one awaiting a day); null when none is booked. */
  next: SeasonNextVisit | null;
  text: { summary: string; next: string };
};

export type SeasonReport = {
  customerId: number;
  customerName: string;
  year: number;
  /** Years with visits for this customer (and the current year), newest first. */
  years: number[];
  today: string;
  thresholds: MiteThreshold[];
  /** The thresholds in words ("August to October: 3 mites per 100 bees"). */
  thresholdLines: string[];
  explanation: readonly string[];
  yards: SeasonYard[];
  totals: { yards: number; roundsDone: number; treatmentsGiven: number };
};

type RoundRow = {
  visit_id: number;
  yard_id: number;
  service_date: string;
  round_number: number;
  rounds_planned: number;
};

type TallyRow = { visit_id: number; outcome: "treated" | "skipped"; mites: number | null; bees_sampled: number | null };

function safeThreshold(isoDate: string, thresholds: readonly MiteThreshold[]): number | null {
  try {
    return roundTo(thresholdOn(isoDate, thresholds), 2);
  } catch {
    return null;
  }
}

/** The season report of one customer for one calendar year. Only that customer's yards are read. */
export async function seasonReportForCustomer(
  db: Knex,
  input: { customerId: number | string; year: number; today: string; settings: BusinessSettings },
): Promise<SeasonReport> {
  const customerId = Number(input.customerId);
  const { year, today, settings } = input;
  const from = `${year}-01-01`;
  const to = `${year}-12-31`;

  const customer = await db("customers").where({ id: customerId }).first("id", "name");
  if (!customer) throw new RangeError(`no customer ${customerId}`);

  const yearRows = (await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .where("yards.customer_id", customerId)
    .whereNot("visits.status", "cancelled")
    .distinct(db.raw("extract(year from visits.service_date)::int as year"))) as unknown as { year: number }[];
  const years = [...new Set([...yearRows.map((r) => Number(r.year)), Number(today.slice(0, 4)), year])].sort((a, b) => b - a);

  const rounds = (await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("yards.customer_id", customerId)
    .where("visits.status", "done")
    .whereBetween("visits.service_date", [from, to])
    .orderBy([{ column: "visits.service_date" }, { column: "visits.id" }])
    .select(
      "visits.id as visit_id",
      "visits.yard_id",
      "visits.service_date",
      "visits.round_number",
      "courses.rounds_planned",
    )) as unknown as RoundRow[];

  const visitIds = rounds.map((r) => r.visit_id);
  const tallies: TallyRow[] = visitIds.length
    ? await db("tallies").whereIn("visit_id", visitIds).select("visit_id", "outcome", "mites", "bees_sampled")
    : [];
  const talliesByVisit = new Map<number, TallyRow[]>();
  for (const t of tallies) {
    const list = talliesByVisit.get(Number(t.visit_id)) ?? [];
    list.push(t);
    talliesByVisit.set(Number(t.visit_id), list);
  }

  const yardIdsWithRounds = [...new Set(rounds.map((r) => Number(r.yard_id)))];
  const yards = await db("yards")
    .where({ customer_id: customerId })
    .where((q) => {
      q.whereNull("archived_at");
      if (yardIdsWithRounds.length) q.orWhereIn("id", yardIdsWithRounds);
    })
    .orderBy([{ column: "name" }, { column: "id" }])
    .select("id", "name", "colony_count", "archived_at");

  const nextRows = (await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("yards.customer_id", customerId)
    .where((q) => {
      q.where((s) => s.whereIn("visits.status", ["scheduled", "in_progress"]).where("visits.service_date", ">=", today)).orWhere("visits.status", "deferred");
    })
    .orderBy([{ column: "visits.service_date" }, { column: "visits.id" }])
    .select(
      "visits.id as visit_id",
      "visits.yard_id",
      "visits.service_date",
      "visits.round_number",
      "visits.status",
      "courses.rounds_planned",
    )) as unknown as (RoundRow & { status: VisitRow["status"] })[];
  const nextByYard = new Map<number, SeasonNextVisit>();
  for (const row of nextRows) {
    if (nextByYard.has(Number(row.yard_id))) continue;
    nextByYard.set(Number(row.yard_id), {
      visitId: Number(row.visit_id),
      serviceDate: row.service_date,
      roundNumber: row.round_number,
      roundsPlanned: row.rounds_planned,
      status: row.status,
    });
  }

  const seasonYards: SeasonYard[] = yards.map((yard) => {
    const yardRounds: SeasonRound[] = [];
    let previous: number | null = null;
    for (const r of rounds.filter((x) => Number(x.yard_id) === Number(yard.id))) {
      const list = talliesByVisit.get(Number(r.visit_id)) ?? [];
      const counted = list.filter((t) => t.mites !== null && t.bees_sampled !== null && t.bees_sampled > 0);
      const loads = counted.map((t) => mitesPer100Bees(t.mites!, t.bees_sampled!));
      // Unrounded for the verdict and the words, which round it once to what they show; the
      // figure kept is rounded to 0.01 (rounding that again to one decimal could differ).
      const exactAverage = loads.length ? loads.reduce((s, v) => s + v, 0) / loads.length : null;
      const average = exactAverage === null ? null : roundTo(exactAverage, 2);
      const threshold = safeThreshold(r.service_date, settings.miteThresholds);
      const change = average !== null && previous !== null ? roundTo(average - previous, 2) : null;
      const fewer = average !== null && previous !== null ? percentReduction(previous, average) : null;
      // Compared as shown (one decimal), so a round shown as "3.0" is never "above" a threshold of 3.
      const level = exactAverage !== null && threshold !== null ? miteLoadLevel(exactAverage, threshold) : null;
      const percentFewer = fewer === null ? null : roundTo(fewer, 1);
      yardRounds.push({
        visitId: Number(r.visit_id),
        serviceDate: r.service_date,
        roundNumber: r.round_number,
        roundsPlanned: r.rounds_planned,
        coloniesTreated: list.filter((t) => t.outcome === "treated").length,
        coloniesSkipped: list.filter((t) => t.outcome === "skipped").length,
        coloniesCounted: counted.length,
        averageMitesPer100: average,
        threshold,
        level,
        coloniesAtOrAboveThreshold: threshold === null ? 0 : loads.filter((v) => atOrAboveThreshold(v, threshold)).length,
        changeFromPrevious: change,
        percentFewerThanPrevious: percentFewer,
        text: {
          mites: exactAverage === null ? "Not counted" : `${per100Text(exactAverage)} (average of ${plural(counted.length, "colony", "colonies")})`,
          verdict: levelText(level, threshold),
          change: changeText(change, percentFewer),
        },
      });
      if (average !== null) previous = average;
    }
    const withCounts = yardRounds.filter((r) => r.averageMitesPer100 !== null);
    const first = withCounts[0];
    const latest = withCounts.length > 1 ? withCounts[withCounts.length - 1] : undefined;
    const overSeason = first && latest ? percentReduction(first.averageMitesPer100!, latest.averageMitesPer100!) : null;
    const next = nextByYard.get(Number(yard.id)) ?? null;
    const firstCount = first ? { serviceDate: first.serviceDate, averageMitesPer100: first.averageMitesPer100! } : null;
    const latestCount = latest ? { serviceDate: latest.serviceDate, averageMitesPer100: latest.averageMitesPer100! } : null;
    const percentFewerOverSeason = overSeason === null ? null : roundTo(overSeason, 1);
    return {
      yardId: Number(yard.id),
      name: yard.name,
      colonies: yard.colony_count,
      archived: yard.archived_at !== null,
      roundsDone: yardRounds.length,
      treatmentsGiven: yardRounds.reduce((s, r) => s + r.coloniesTreated, 0),
      rounds: yardRounds,
      firstCount,
      latestCount,
      percentFewerOverSeason,
      next,
      text: { summary: seasonSummaryText(firstCount, latestCount, percentFewerOverSeason), next: nextVisitText(next) },
    };
  });

  return {
    customerId,
    customerName: customer.name,
    year,
    years,
    today,
    thresholds: settings.miteThresholds.map((t) => ({ ...t })),
    thresholdLines: settings.miteThresholds.map((t) => `${monthSpanText(t)}: ${t.mitesPer100} ${t.mitesPer100 === 1 ? "mite" : "mites"} per 100 bees`),
    explanation: SEASON_REPORT_EXPLANATION,
    yards: seasonYards,
    totals: {
      yards: seasonYards.length,
      roundsDone: seasonYards.reduce((s, y) => s + y.roundsDone, 0),
      treatmentsGiven: seasonYards.reduce((s, y) => s + y.treatmentsGiven, 0),
    },
  };
}

const MONTHS = ["January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"];

/** "August to October", or "March" for a one-month span. */
export function monthSpanText(t: { fromMonth: number; toMonth: number }): string {
  return t.fromMonth === t.toMonth ? MONTHS[t.fromMonth - 1] : `${MONTHS[t.fromMonth - 1]} to ${MONTHS[t.toMonth - 1]}`;
}

/** Mites per 100 bees as people read it: one decimal ("2.5"). */
export function per100Text(value: number): string {
  return roundTo(value, 1).toFixed(1);
}

/** "1.2 fewer (48 % fewer)", "0.4 more (20 % more)", "no change". */
export function changeText(change: number | null, percentFewer: number | null): string {
  if (change === null) return "—";
  if (roundTo(change, 1) === 0) return "about the same";
  const amount = `${per100Text(Math.abs(change))} ${change < 0 ? "fewer" : "more"}`;
  if (percentFewer === null) return amount;
  return `${amount} (${Math.abs(Math.round(percentFewer))}\u00a0% ${percentFewer >= 0 ? "fewer" : "more"})`;
}

/** The plain-words explanation shown above the numbers, on the page and in the PDF. */
export const SEASON_REPORT_EXPLANATION = [
  "At each visit the crew may take a mite count from some colonies: a sample of about half a cup of bees (roughly 300) is washed, and the Varroa mites that come off are counted.",
  "We show that count as mites per 100 bees. 3 per 100 bees means about 3 in every 100 bees carry a mite. For each round we show the average over the colonies that were counted.",
  "The action threshold is the count at which mites start to do real harm and treatment is needed. Below it is where you want your colonies to be.",
  "A falling count from round to round means the treatment is working. Counts vary from sample to sample, so look at the trend more than at one number.",
] as const;

/** A round's average against its threshold, in words. */
export function levelText(level: MiteLoadLevel | null, threshold: number | null): string {
  if (level === null || threshold === null) return "";
  const t = `${Number.isInteger(threshold) ? threshold : threshold.toFixed(1)} per 100 bees`;
  if (level === "below") return `below the action threshold (${t})`;
  if (level === "at") return `at the action threshold (${t})`;
  return `above the action threshold (${t})`;
}

function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** What comes next at a yard, in words. */
export function nextVisitText(next: SeasonNextVisit | null): string {
  if (!next) return "Nothing is booked. Book a visit when your colonies need one.";
  const round = `round ${next.roundNumber} of ${next.roundsPlanned}`;
  if (next.status === "deferred") {
    return `Next: ${round}, due around ${formatServiceDate(next.serviceDate)}. That day was full, so the office will confirm a day with you.`;
  }
  if (next.status === "in_progress") return `Next: ${round} is under way today (${formatServiceDate(next.serviceDate)}).`;
  return `Next: ${round} on ${formatServiceDate(next.serviceDate)}.`;
}

/** The season's mite counts at a yard in one or two sentences. */
export function seasonSummaryText(
  first: { serviceDate: string; averageMitesPer100: number } | null,
  latest: { serviceDate: string; averageMitesPer100: number } | null,
  percentFewer: number | null,
): string {
  if (!first) return "No mite counts were taken at this yard this season.";
  if (!latest) return `One round with mite counts: ${per100Text(first.averageMitesPer100)} mites per 100 bees on ${formatServiceDate(first.serviceDate)}.`;
  const trend =
    percentFewer === null
      ? ""
      : Math.round(percentFewer) === 0
        ? " About the same as at the first count."
        : percentFewer > 0
          ? ` That is ${Math.round(percentFewer)} % fewer mites than at the first count.`
          : ` That is ${Math.abs(Math.round(percentFewer))} % more mites than at the first count.`;
  return `First count ${per100Text(first.averageMitesPer100)} mites per 100 bees (${formatServiceDate(first.serviceDate, false)}), latest ${per100Text(latest.averageMitesPer100)} (${formatServiceDate(latest.serviceDate, false)}).${trend}`;
}
