import { formatServiceDate } from "~/components/format";
import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// The e-mail to the dispatchers (and the owner) when a customer moves or cancels a visit in
// the portal, so nobody plans a day around a visit that has gone. Pure: the caller queues the
// result with queueEmail (app/models/emails.server.ts). Values are passed raw; the layout
// escapes them and ends the e-mail with the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

/** The staff's wording before the cautions (as in <SafetyCautions audience="staff" />). */
const STAFF_SAFETY_INTRO = "Before every dose:";

/** What the customer changed. */
export type CustomerVisitChange =
  | { kind: "moved"; fromDate: string; toDate: string; laterRounds: readonly { roundNumber: number; fromDate: string; toDate: string }[] }
  | { kind: "cancelled"; serviceDate: string; laterRounds: readonly { roundNumber: number; date: string }[]; reason: string | null };

function colonies(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

/** Sent to each active dispatcher and owner when a customer moves or cancels a visit. */
export function customerChangedVisitEmail(input: {
  recipientName: string;
  customerName: string;
  customerEmail: string;
  customerPhone?: string | null;
  yardName: string;
  yardAddress?: string | null;
  colonies: number;
  roundNumber: number;
  roundsPlanned: number;
  change: CustomerVisitChange;
  /** The visit's page for the dispatcher. */
  visitUrl: string;
}): EmailContent {
  const change = input.change;
  const round = `round ${input.roundNumber} of ${input.roundsPlanned}`;
  const name = input.recipientName.trim();
  const blocks: EmailBlock[] = [{ kind: "paragraph", text: name ? `Hello ${name},` : "Hello," }];
  let subject: string;
  let title: string;
  if (change.kind === "moved") {
    const from = formatServiceDate(change.fromDate);
    const to = formatServiceDate(change.toDate);
    subject = `${input.customerName} moved a visit: ${input.yardName}, ${from} → ${to}`;
    title = "A customer moved a visit";
    blocks.push(
      { kind: "paragraph", text: `${input.customerName} moved the treatment visit to ${input.yardName} (${round}) from ${from} to ${to} in the portal.` },
      {
        kind: "details",
        rows: [
          ["Customer", input.customerName],
          ["Yard", input.yardName],
          ["Colonies", colonies(input.colonies)],
          ["Was", from],
          ["Now", to],
        ],
      },
    );
    if (change.laterRounds.length > 0) {
      blocks.push(
        { kind: "paragraph", text: "Later rounds of the course moved with it:" },
        { kind: "list", items: change.laterRounds.map((r) => `Round ${r.roundNumber}: ${formatServiceDate(r.fromDate)} → ${formatServiceDate(r.toDate)}`) },
      );
    }
    blocks.push({ kind: "paragraph", text: `It is no longer on any run for ${from}; the room there is free again. Plan ${to} with it.` });
  } else {
    const date = formatServiceDate(change.serviceDate);
    subject = `${input.customerName} cancelled a visit: ${input.yardName}, ${date}`;
    title = "A customer cancelled a visit";
    blocks.push(
      { kind: "paragraph", text: `${input.customerName} cancelled the treatment visit to ${input.yardName} (${round}) on ${date} in the portal, and with it the rest of the course.` },
      {
        kind: "details",
        rows: [
          ["Customer", input.customerName],
          ["Yard", input.yardName],
          ["Colonies", colonies(input.colonies)],
          ["Date", date],
          ["Reason", change.reason?.trim() || "None given"],
        ],
      },
    );
    if (change.laterRounds.length > 0) {
      blocks.push(
        { kind: "paragraph", text: "Later rounds cancelled with it:" },
        { kind: "list", items: change.laterRounds.map((r) => `Round ${r.roundNumber}: ${formatServiceDate(r.date)}`) },
      );
    }
    blocks.push({ kind: "paragraph", text: `The room on ${date} is free again for other bookings.` });
  }
  const reach = [input.customerEmail.trim(), input.customerPhone?.trim()].filter(Boolean).join(" · ");
  blocks.push({ kind: "heading", text: "Customer" }, {
    kind: "list",
    items: [reach ? `${input.customerName}: ${reach}` : input.customerName, input.yardAddress?.trim() ? `${input.yardName}: ${input.yardAddress.trim()}` : input.yardName],
  });
  blocks.push({ kind: "button", label: "Open the visit", href: input.visitUrl });
  return renderEmail({
    subject,
    preheader: change.kind === "moved" ? `${input.yardName}: now ${formatServiceDate(change.toDate)}` : `${input.yardName} on ${formatServiceDate(change.serviceDate)} is cancelled`,
    title,
    blocks,
    safetyIntro: STAFF_SAFETY_INTRO,
    footer: "You get this e-mail as a dispatcher or owner of the business in Varroute.",
  });
}
