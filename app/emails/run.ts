import { formatServiceDate } from "~/components/format";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// E-mails to crews about their runs. Pure functions: the caller queues the result with
// queueEmail (app/models/emails.server.ts). Values are passed raw; the layout escapes them
// and ends every e-mail with the oxalic acid vapor cautions (app/domain/safety.ts).

export type { EmailContent } from "./layout";

/** The crew's wording before the cautions (as in <SafetyCautions audience="crew" />). */
export const CREW_SAFETY_INTRO = "Before every dose:";

export type RunEmailStop = {
  /** The stop's number on the run, from 1. */
  position: number;
  yardName: string;
  /** Arrival time as the crew reads it, e.g. "09:40" (in the business's time zone). */
  arrive: string;
  colonies: number;
  /** Grams of oxalic acid dihydrate for the stop. */
  grams: number;
};

function colonies(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

function grams(value: number): string {
  return `${value.toFixed(2)} g`;
}

/** Sent to each crew member when the dispatcher publishes their run. */
export function runPublishedEmail(input: {
  crewName: string;
  serviceDate: string;
  stops: readonly RunEmailStop[];
  totalGrams: number;
  appUrl: string;
  /** Set when the run was published before and has changed since. */
  version?: number;
}): EmailContent {
  const date = formatServiceDate(input.serviceDate);
  const totalColonies = input.stops.reduce((sum, stop) => sum + stop.colonies, 0);
  const stops = [...input.stops].sort((a, b) => a.position - b.position);
  const updated = (input.version ?? 1) > 1;
  const blocks: EmailBlock[] = [
    {
      kind: "paragraph",
      text: updated
        ? `${input.crewName}'s run for ${date} has changed. This is the run to follow; it replaces the one sent before.`
        : `${input.crewName}'s run for ${date} is ready.`,
    },
    {
      kind: "details",
      rows: [
        ["Date", date],
        ["Crew", input.crewName],
        ["Stops", String(stops.length)],
        ["Colonies", colonies(totalColonies)],
        ["Oxalic acid dihydrate to carry", grams(input.totalGrams)],
      ],
    },
    { kind: "heading", text: "Stops" },
    {
      kind: "list",
      items: stops.map((stop) => `${stop.position}. ${stop.arrive} ${stop.yardName}: ${colonies(stop.colonies)}, ${grams(stop.grams)}`),
    },
    {
      kind: "paragraph",
      text: "Arrival times are planned times. Open the run on your phone for the map, access notes and the per-colony check-off.",
    },
    { kind: "button", label: "Open the run", href: input.appUrl },
  ];
  return renderEmail({
    subject: `${updated ? "Run changed" : "Your run"}: ${input.crewName}, ${date} (${stops.length} ${stops.length === 1 ? "stop" : "stops"})`,
    preheader: `${stops.length} ${stops.length === 1 ? "stop" : "stops"}, ${colonies(totalColonies)}, ${grams(input.totalGrams)} to carry`,
    title: updated ? "Your run has changed" : "Your run is published",
    blocks,
    safetyIntro: CREW_SAFETY_INTRO,
    footer: "This e-mail was sent by Varroute because you are on this crew.",
  });
}
