import { formatServiceDate } from "~/components/format";
import { formatMitesPer100, mitesPer100AsShown } from "~/domain/mites";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// The visit report a customer gets when the crew finishes a visit: what was treated and
// skipped (and why), the grams applied, each mite count against the action threshold, and
// the next round. Pure: the caller queues the result with queueEmail. Values are passed raw;
// the layout escapes them and appends the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

export type ReportSkipReason = "dead_out" | "queenless" | "supers_on" | "aggressive" | "not_reachable" | "other";

/** The reasons a colony is skipped, as customers read them. */
export const SKIP_REASON_TEXT: Record<ReportSkipReason, string> = {
  dead_out: "Dead-out (no living colony)",
  queenless: "Queenless",
  supers_on: "Honey supers were on",
  aggressive: "Too defensive to treat safely",
  not_reachable: "Could not be reached",
  other: "Other",
};

export type ReportColony = {
  label: string;
  outcome: "treated" | "skipped";
  skipReason: ReportSkipReason | null;
  skipNote: string | null;
  doseGrams: number;
  mites: number | null;
  beesSampled: number | null;
  /** True when beesSampled was estimated from the sample's volume, not counted. */
  beesEstimated?: boolean;
  /** The sample's volume in mL, when the crew gave it. */
  sampleMl?: number | null;
  /** Mites per 100 bees (0.01), when a wash count was taken. */
  mitesPer100: number | null;
  /** The action threshold in force on the visit's date, when a wash count was taken. */
  threshold: number | null;
  level: "below" | "at" | "above" | null;
};

export type VisitReportEmailInput = {
  customerName: string;
  yardName: string;
  serviceDate: string;
  roundNumber: number;
  roundsPlanned: number;
  treated: number;
  skipped: number;
  grams: number;
  productName: string;
  colonies: readonly ReportColony[];
  nextRound: { date: string; deferred: boolean } | null;
  courseComplete: boolean;
  /** Rounds added to the course because the crew found brood at this visit (0 or absent: none). */
  roundsAdded?: number;
  portalUrl: string;
};

function coloniesText(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

function gramsText(value: number): string {
  return `${value.toFixed(2)} g`;
}

/** "3.0 per 100 bees" — one decimal, as counts are shown everywhere (and compared). */
function per100Text(value: number): string {
  return `${formatMitesPer100(value)} per 100 bees`;
}

/** "3 per 100 bees", "2.5 per 100 bees": at the precision the load is compared with it. */
function thresholdText(value: number): string {
  const shown = mitesPer100AsShown(value);
  return `${Number.isInteger(shown) ? shown : formatMitesPer100(shown)} per 100 bees`;
}

/** "300 bees" when counted; "about 355 bees (estimated from a 118 mL sample)" when estimated from the volume. */
function beesText(colony: ReportColony): string {
  if (colony.beesEstimated && colony.sampleMl != null) {
    return `about ${colony.beesSampled} bees (estimated from a ${colony.sampleMl} mL sample)`;
  }
  return `${colony.beesSampled} bees`;
}

/** "H1: 9 mites in 300 bees = 3.0 per 100 bees, at the action threshold (3 per 100 bees)". */
export function miteCountLine(colony: ReportColony): string | null {
  if (colony.mites === null || colony.beesSampled === null || colony.mitesPer100 === null) return null;
  const base = `${colony.label}: ${colony.mites} ${colony.mites === 1 ? "mite" : "mites"} in ${beesText(colony)} = ${per100Text(colony.mitesPer100)}`;
  if (colony.threshold === null || colony.level === null) return base;
  const verdict =
    colony.level === "below"
      ? `below the action threshold (${thresholdText(colony.threshold)})`
      : colony.level === "at"
        ? `at the action threshold (${thresholdText(colony.threshold)})`
        : `above the action threshold (${thresholdText(colony.threshold)})`;
  return `${base}, ${verdict}`;
}

export function skippedColonyLine(colony: ReportColony): string {
  const reason = colony.skipReason ? SKIP_REASON_TEXT[colony.skipReason] : "Skipped";
  return `${colony.label}: ${reason}${colony.skipNote?.trim() ? ` — ${colony.skipNote.trim()}` : ""}`;
}

/** Sent to the customer when the crew finishes a visit. */
export function visitReportEmail(input: VisitReportEmailInput): EmailContent {
  const date = formatServiceDate(input.serviceDate);
  const name = input.customerName.trim();
  const skipped = input.colonies.filter((c) => c.outcome === "skipped");
  const counts = input.colonies.map(miteCountLine).filter((line): line is string => line !== null);
  const above = input.colonies.filter((c) => c.level === "above").length;

  const nextText = input.nextRound
    ? input.nextRound.deferred
      ? `Round ${input.roundNumber + 1} is due around ${formatServiceDate(input.nextRound.date)}; that day is full, so we will confirm the date with you.`
      : `Round ${input.roundNumber + 1} is booked for ${formatServiceDate(input.nextRound.date)}.`
    : input.courseComplete
      ? "This was the last round: the treatment course for this yard is complete."
      : "No further round is planned.";

  const added = input.roundsAdded ?? 0;
  const broodText =
    added > 0
      ? `Our crew found brood in the colonies, so the course needs more rounds to reach the mites under the brood caps: we added ${added} more ${added === 1 ? "round" : "rounds"}, ${input.roundsPlanned} in all.${
          input.nextRound
            ? input.nextRound.deferred
              ? ` The next round is due around ${formatServiceDate(input.nextRound.date)}; we will confirm the date with you.`
              : ` The next round is on ${formatServiceDate(input.nextRound.date)}.`
            : ""
        }`
      : null;

  const blocks: EmailBlock[] = [
    { kind: "paragraph", text: name ? `Hello ${name},` : "Hello," },
    {
      kind: "paragraph",
      text: `Our crew treated ${coloniesText(input.treated)} at ${input.yardName} on ${date} with oxalic acid vapor (${input.productName}).`,
    },
    {
      kind: "details",
      rows: [
        ["Date", date],
        ["Yard", input.yardName],
        ["Round", `${input.roundNumber} of ${input.roundsPlanned}`],
        ["Colonies treated", String(input.treated)],
        ["Colonies skipped", String(input.skipped)],
        ["Oxalic acid dihydrate applied", gramsText(input.grams)],
        ["Next round", input.nextRound ? formatServiceDate(input.nextRound.date) + (input.nextRound.deferred ? " (to be confirmed)" : "") : "None"],
      ],
    },
  ];
  if (broodText) blocks.push({ kind: "heading", text: "Brood found: rounds added" }, { kind: "paragraph", text: broodText });
  if (skipped.length > 0) {
    blocks.push({ kind: "heading", text: "Colonies not treated" }, { kind: "list", items: skipped.map(skippedColonyLine) });
  }
  if (counts.length > 0) {
    blocks.push(
      { kind: "heading", text: "Mite counts" },
      {
        kind: "paragraph",
        text: `Mites per 100 bees from a wash of a bee sample, compared with the seasonal action threshold.${
          input.colonies.some((c) => c.beesEstimated && c.mites !== null) ? " Where the bees were not counted, their number is estimated from the sample's volume." : ""
        }`,
      },
      { kind: "list", items: counts },
    );
    if (above > 0) {
      blocks.push({
        kind: "paragraph",
        text: `${coloniesText(above)} ${above === 1 ? "was" : "were"} above the action threshold at this visit. Completing every round of the course matters most for ${above === 1 ? "it" : "them"}.`,
      });
    }
  }
  blocks.push(
    { kind: "paragraph", text: nextText },
    {
      kind: "note",
      title: "After the treatment",
      items: [
        "Keep honey supers off until the course is complete; supers with honey for people to eat must not be on the hive during treatment.",
        "Leave the entrances as the crew left them today.",
      ],
    },
    { kind: "button", label: "See the visit report", href: input.portalUrl },
  );
  return renderEmail({
    subject: `Visit report: ${input.yardName}, ${date}`,
    preheader: `${coloniesText(input.treated)} treated, ${gramsText(input.grams)} applied`,
    title: "Your treatment visit report",
    blocks,
  });
}
