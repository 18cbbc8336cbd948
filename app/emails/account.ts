import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// The e-mails about a person's own account: the "forgot password" link, the notice that the
// password was changed, and the two e-mails of an e-mail address change (the link to the
// new address, the notice to the old one). They go to every role, so the cautions are
// introduced for the reader's role. Pure: values are passed raw; the layout escapes them.

export type { EmailContent } from "./layout";

/** Who reads it: customers get the customer wording of the cautions, staff the crew's. */
export type AccountAudience = "customer" | "staff";

const STAFF_SAFETY_INTRO = "Before every dose:";
const FOOTER = "You get this e-mail because it concerns your Varroute sign-in.";

function greeting(name: string): EmailBlock {
  const trimmed = name.trim();
  return { kind: "paragraph", text: trimmed ? `Hello ${trimmed},` : "Hello," };
}

function intro(audience: AccountAudience): string | undefined {
  return audience === "staff" ? STAFF_SAFETY_INTRO : undefined;
}

/** The single-use link that lets the person choose a new password. */
export function passwordResetEmail(input: { name: string; resetUrl: string; validMinutes: number; audience: AccountAudience }): EmailContent {
  const valid = input.validMinutes % 60 === 0 ? `${input.validMinutes / 60} hour${input.validMinutes === 60 ? "" : "s"}` : `${input.validMinutes} minutes`;
  return renderEmail({
    subject: "Reset your Varroute password",
    preheader: `The link works once, for ${valid}.`,
    title: "Choose a new password",
    blocks: [
      greeting(input.name),
      { kind: "paragraph", text: "Someone, probably you, asked to reset the password of the Varroute account that uses this e-mail address. Follow the link to choose a new one." },
      { kind: "button", label: "Choose a new password", href: input.resetUrl },
      { kind: "paragraph", text: `The link works once, for ${valid}. Choosing a new password signs you out on every other device.` },
      { kind: "paragraph", text: "Did not ask for this? Then ignore this e-mail: your password stays as it is." },
    ],
    safetyIntro: intro(input.audience),
    footer: FOOTER,
  });
}

/** After a password reset or change: so the owner notices a change they did not make. */
export function passwordChangedEmail(input: { name: string; how: "reset" | "change"; forgotUrl: string; audience: AccountAudience }): EmailContent {
  return renderEmail({
    subject: "Your Varroute password was changed",
    preheader: "If you did not change it, reset it now.",
    title: "Your password was changed",
    blocks: [
      greeting(input.name),
      {
        kind: "paragraph",
        text:
          input.how === "reset"
            ? "The password of your Varroute account was just changed with a reset link e-mailed to this address. You were signed out on every other device."
            : "The password of your Varroute account was just changed on your profile page. You were signed out on every other device.",
      },
      { kind: "paragraph", text: "Was this you? Then there is nothing more to do." },
      { kind: "paragraph", text: "Was it not you? Choose a new password at once with the link below, and tell the office." },
      { kind: "button", label: "Reset my password", href: input.forgotUrl },
    ],
    safetyIntro: intro(input.audience),
    footer: FOOTER,
  });
}

/** To the NEW address: the single-use link that makes it the account's address. */
export function emailChangeConfirmEmail(input: { name: string; newEmail: string; confirmUrl: string; validHours: number; audience: AccountAudience }): EmailContent {
  return renderEmail({
    subject: "Confirm your new e-mail address for Varroute",
    preheader: `The link works once, for ${input.validHours} hours.`,
    title: "Confirm your new e-mail address",
    blocks: [
      greeting(input.name),
      { kind: "paragraph", text: "You asked to sign in to Varroute with this e-mail address from now on. Follow the link to confirm it is yours; the change is made when you do." },
      { kind: "details", rows: [["New e-mail address", input.newEmail]] },
      { kind: "button", label: "Use this e-mail address", href: input.confirmUrl },
      { kind: "paragraph", text: `The link works once, for ${input.validHours} hours. Until you follow it, you sign in with your old address.` },
      { kind: "paragraph", text: "Did not ask for this? Then ignore this e-mail: nothing changes without the link." },
    ],
    safetyIntro: intro(input.audience),
    footer: FOOTER,
  });
}

/** To the OLD address: someone signed in as this person asked to move the account to another address. */
export function emailChangeNoticeEmail(input: { name: string; newEmail: string; forgotUrl: string; audience: AccountAudience }): EmailContent {
  return renderEmail({
    subject: "A new e-mail address was requested for your Varroute account",
    preheader: "The change happens only when the new address confirms it.",
    title: "A new e-mail address was requested",
    blocks: [
      greeting(input.name),
      { kind: "paragraph", text: "Someone signed in to your Varroute account asked to use another e-mail address for it. We sent a link to that address; the change happens only when the link is followed." },
      { kind: "details", rows: [["New e-mail address", input.newEmail]] },
      { kind: "paragraph", text: "Was this you? Then there is nothing more to do here." },
      { kind: "paragraph", text: "Was it not you? Reset your password now with the link below: that cancels the change of address and signs everyone else out. Then tell the office." },
      { kind: "button", label: "Reset my password", href: input.forgotUrl },
    ],
    safetyIntro: intro(input.audience),
    footer: FOOTER,
  });
}
