import { renderEmail, type EmailContent } from "./layout";

// The e-mail the owner's invitation sends to a new member of staff: who invited them, to which
// business, for which role, and the single-use link that lets them set a password. Pure:
// values are passed raw; the layout escapes them and appends the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

/** Staff read the cautions as the people who apply the dose. */
const STAFF_SAFETY_INTRO = "Whoever handles oxalic acid dihydrate or a vaporizer works with these precautions:";

export type StaffInvitationEmailInput = {
  name: string;
  invitedByName: string;
  businessName: string;
  /** The role's name as the app shows it, e.g. "Office". */
  roleName: string;
  /** What the role may do, in a few words. */
  roleDuties: string;
  crewName: string | null;
  acceptUrl: string;
  validDays: number;
};

/** To the invitee: the link that makes their staff account. */
export function staffInvitationEmail(input: StaffInvitationEmailInput): EmailContent {
  const name = input.name.trim();
  const rows: [string, string][] = [
    ["Business", input.businessName],
    ["Role", input.roleName],
    ["Invited by", input.invitedByName],
  ];
  if (input.crewName) rows.push(["Crew", input.crewName]);
  return renderEmail({
    subject: `${input.invitedByName} invited you to ${input.businessName} on Varroute`,
    preheader: `Set a password within ${input.validDays} days to join as ${input.roleName.toLowerCase()}.`,
    title: `Join ${input.businessName} on Varroute`,
    blocks: [
      { kind: "paragraph", text: name ? `Hello ${name},` : "Hello," },
      {
        kind: "paragraph",
        text: `${input.invitedByName} invited you to work in ${input.businessName}'s Varroute as ${input.roleName.toLowerCase()}: ${input.roleDuties}.`,
      },
      { kind: "details", rows },
      { kind: "button", label: "Set my password", href: input.acceptUrl },
      {
        kind: "paragraph",
        text: `The link works once, for ${input.validDays} days. If it has expired, ask ${input.invitedByName} to send it again.`,
      },
      { kind: "paragraph", text: "Not expecting this? Ignore the e-mail: no account is made without the link." },
    ],
    safetyIntro: STAFF_SAFETY_INTRO,
    footer: `You get this e-mail because ${input.invitedByName} entered your address on ${input.businessName}'s staff page in Varroute.`,
  });
}
