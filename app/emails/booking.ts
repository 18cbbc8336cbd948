import { formatServiceDate, timePreferenceName } from "~/components/format";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// E-mails to customers about their bookings and visits. Pure functions: the caller
// queues the result with queueEmail (app/models/emails.server.ts). Values are passed raw;
// the layout escapes them.

export type { EmailContent } from "./layout";

type TimePreference = "any" | "morning" | "afternoon";

function colonies(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

function whenText(timePreference: TimePreference): string {
  return timePreference === "any" ? "Any time of day" : timePreferenceName(timePreference);
}

function greeting(customerName: string): EmailBlock {
  const name = customerName.trim();
  return { kind: "paragraph", text: name ? `Hello ${name},` : "Hello," };
}

const PREPARE_ITEMS = [
  "Take the honey supers off before the visit. Supers with honey for people to eat must not be on the hive during treatment.",
  "Keep pets indoors and people away from the hives while the crew works.",
  "Make sure the crew can reach every hive: unlock gates and clear the way to the yard.",
] as const;

/** Sent when a booking is confirmed. */
export function bookingConfirmationEmail(input: {
  customerName: string;
  serviceDate: string;
  timePreference: TimePreference;
  yards: { name: string; colonies: number; address?: string | null }[];
  roundsNote?: string | null;
  portalUrl: string;
}): EmailContent {
  const date = formatServiceDate(input.serviceDate);
  const total = input.yards.reduce((sum, yard) => sum + yard.colonies, 0);
  const blocks: EmailBlock[] = [
    greeting(input.customerName),
    { kind: "paragraph", text: `Thank you for booking. Our crew will treat your colonies against Varroa with oxalic acid vapor on ${date}.` },
    {
      kind: "details",
      rows: [
        ["Date", date],
        ["Time", whenText(input.timePreference)],
        ["Colonies", colonies(total)],
      ],
    },
    { kind: "heading", text: input.yards.length === 1 ? "Yard" : "Yards" },
    {
      kind: "list",
      items: input.yards.map((yard) => `${yard.name}: ${colonies(yard.colonies)}${yard.address?.trim() ? ` (${yard.address.trim()})` : ""}`),
    },
  ];
  if (input.roundsNote?.trim()) blocks.push({ kind: "paragraph", text: input.roundsNote.trim() });
  blocks.push(
    { kind: "note", title: "Before the visit", items: PREPARE_ITEMS },
    { kind: "paragraph", text: "We will send you a reminder the day before." },
    { kind: "button", label: "See your booking", href: input.portalUrl },
  );
  return renderEmail({
    subject: `Booking confirmed: Varroa treatment on ${date}`,
    preheader: `${colonies(total)} on ${date}`,
    title: "Your treatment visit is booked",
    blocks,
  });
}

/** Sent the day before a visit: supers off, pets in, what to expect. */
export function visitReminderEmail(input: {
  customerName: string;
  serviceDate: string;
  timePreference: TimePreference;
  yards: { name: string; colonies: number }[];
  portalUrl: string;
}): EmailContent {
  const date = formatServiceDate(input.serviceDate);
  const total = input.yards.reduce((sum, yard) => sum + yard.colonies, 0);
  return renderEmail({
    subject: `Reminder: Varroa treatment tomorrow, ${date}`,
    preheader: "Please take the honey supers off and keep pets indoors.",
    title: "Our crew visits tomorrow",
    blocks: [
      greeting(input.customerName),
      { kind: "paragraph", text: `This is a reminder that our crew will treat your colonies tomorrow, ${date}.` },
      {
        kind: "details",
        rows: [
          ["Date", date],
          ["Time", whenText(input.timePreference)],
          ["Colonies", colonies(total)],
        ],
      },
      { kind: "list", items: input.yards.map((yard) => `${yard.name}: ${colonies(yard.colonies)}`) },
      {
        kind: "note",
        title: "Please get ready today",
        items: [
          "Remove the honey supers today. Supers with honey for people to eat must not be on the hive during treatment.",
          "Keep pets indoors and children and visitors away from the hives during the visit.",
          "Unlock gates and clear the way so the crew can reach every hive.",
        ],
      },
      { kind: "heading", text: "What to expect" },
      {
        kind: "list",
        items: [
          "The crew wears respirators, sealed eye protection and acid-resistant gloves.",
          "At each hive they vaporize a measured dose of oxalic acid dihydrate through the entrance and close the entrance for a few minutes while the vapor settles.",
          "If you are at home, stay indoors or well away from the hives until the crew has finished: the vapor burns eyes and airways.",
          "The crew records what was done at every colony; the visit report appears in your portal.",
        ],
      },
      { kind: "button", label: "See your visit", href: input.portalUrl },
    ],
  });
}

/** A later round of a course that moved along with the visit the customer moved. */
export type MovedRound = { roundNumber: number; fromDate: string; toDate: string };

/** Sent when a visit moves to another day (by the dispatcher, or by the customer in the portal). */
export function visitRescheduledEmail(input: {
  customerName: string;
  yardName: string;
  colonies: number;
  fromDate: string;
  toDate: string;
  reason?: string | null;
  portalUrl: string;
  /** Set when the customer moved it themselves: the e-mail confirms their change. */
  byCustomer?: boolean;
  roundNumber?: number;
  /** Later rounds of the course moved with it, to keep their spacing. */
  laterRounds?: readonly MovedRound[];
}): EmailContent {
  const from = formatServiceDate(input.fromDate);
  const to = formatServiceDate(input.toDate);
  const round = input.roundNumber ? ` (round ${input.roundNumber})` : "";
  const later = input.laterRounds ?? [];
  const blocks: EmailBlock[] = [
    greeting(input.customerName),
    {
      kind: "paragraph",
      text: input.byCustomer
        ? `As you asked, the treatment visit${round} for ${input.yardName} has moved from ${from} to ${to}.`
        : `The treatment visit for ${input.yardName} has moved from ${from} to ${to}.`,
    },
    {
      kind: "details",
      rows: [
        ["Yard", input.yardName],
        ["Colonies", colonies(input.colonies)],
        ["Was", from],
        ["Now", to],
      ],
    },
  ];
  if (later.length > 0) {
    blocks.push(
      { kind: "paragraph", text: "The later rounds of the course moved with it, so the rounds stay the same number of days apart:" },
      { kind: "list", items: later.map((r) => `Round ${r.roundNumber}: ${formatServiceDate(r.fromDate)} → ${formatServiceDate(r.toDate)}`) },
    );
  }
  if (input.reason?.trim()) blocks.push({ kind: "paragraph", text: `Reason: ${input.reason.trim()}` });
  blocks.push(
    { kind: "note", title: "Before the new date", items: PREPARE_ITEMS },
    { kind: "button", label: "See your visits", href: input.portalUrl },
  );
  return renderEmail({
    subject: `Your treatment visit has moved to ${to}`,
    preheader: `${input.yardName}: now ${to}`,
    title: "Your treatment visit has a new date",
    blocks,
  });
}

/** Sent when a booking is cancelled (by the business, or by the customer in the portal). */
export function bookingCancelledEmail(input: {
  customerName: string;
  yardName: string;
  serviceDate: string;
  reason?: string | null;
  portalUrl: string;
  /** Set when the customer cancelled it themselves: the e-mail confirms their change. */
  byCustomer?: boolean;
  roundNumber?: number;
  /** Later rounds of the course cancelled with it. */
  laterRounds?: readonly { roundNumber: number; date: string }[];
}): EmailContent {
  const date = formatServiceDate(input.serviceDate);
  const round = input.roundNumber ? ` (round ${input.roundNumber})` : "";
  const later = input.laterRounds ?? [];
  const blocks: EmailBlock[] = [
    greeting(input.customerName),
    {
      kind: "paragraph",
      text: input.byCustomer
        ? `As you asked, your treatment visit${round} for ${input.yardName} on ${date} is cancelled, with the rest of its course.`
        : `Your treatment visit for ${input.yardName} on ${date} is cancelled.`,
    },
    {
      kind: "details",
      rows: [
        ["Yard", input.yardName],
        ["Date", date],
      ],
    },
  ];
  if (later.length > 0) {
    blocks.push(
      { kind: "paragraph", text: "These later rounds of the course are cancelled too:" },
      { kind: "list", items: later.map((r) => `Round ${r.roundNumber}: ${formatServiceDate(r.date)}`) },
    );
  }
  if (input.reason?.trim()) blocks.push({ kind: "paragraph", text: `Reason: ${input.reason.trim()}` });
  blocks.push(
    { kind: "paragraph", text: "Your colonies may still need treatment against Varroa. You can book another day in your portal." },
    { kind: "button", label: "Book another visit", href: input.portalUrl },
  );
  return renderEmail({
    subject: `Booking cancelled: ${input.yardName} on ${date}`,
    preheader: `${input.yardName} on ${date} is cancelled`,
    title: "Your treatment visit is cancelled",
    blocks,
  });
}
