import { renderEmail, type EmailBlock, type EmailContent } from "./layout";

// The two e-mails a sign-up sends, one of which goes to every address typed into the
// sign-up form: the confirmation link for a new address, or, for an address that already
// has an account, a note saying so (nothing in it makes an account). The page after the
// form is the same either way, so only the address's owner learns which it was. Pure:
// values are passed raw; the layout escapes them and appends the oxalic acid vapor cautions.

export type { EmailContent } from "./layout";

const FOOTER = "You get this e-mail because your address was entered on Varroute's sign-up page.";

function greeting(name: string): EmailBlock {
  const trimmed = name.trim();
  return { kind: "paragraph", text: trimmed ? `Hello ${trimmed},` : "Hello," };
}

/** To a new address: the single-use link that makes the account. */
export function signUpConfirmEmail(input: { name: string; confirmUrl: string; validHours: number }): EmailContent {
  return renderEmail({
    subject: "Confirm your e-mail to create your Varroute account",
    preheader: `The link works once, for ${input.validHours} hours.`,
    title: "Confirm your e-mail address",
    blocks: [
      greeting(input.name),
      { kind: "paragraph", text: "Thank you for signing up. Follow the link to confirm this is your e-mail address; your account is made when you do, and you are signed in." },
      { kind: "button", label: "Create my account", href: input.confirmUrl },
      { kind: "paragraph", text: `The link works once, for ${input.validHours} hours. After that, sign up again.` },
      { kind: "paragraph", text: "Did not sign up? Then ignore this e-mail: no account is made without the link." },
    ],
    footer: FOOTER,
  });
}

/** To an address that has an account already: sign in or have the password reset; no link that makes anything. */
export function signUpAccountExistsEmail(input: { name: string; signInUrl: string; resetUrl: string }): EmailContent {
  return renderEmail({
    subject: "You already have a Varroute account",
    preheader: "Sign in with this e-mail address.",
    title: "You already have an account",
    blocks: [
      greeting(input.name),
      { kind: "paragraph", text: "Someone, probably you, asked to create a Varroute account with this e-mail address. You already have one, so nothing new was made." },
      { kind: "button", label: "Sign in", href: input.signInUrl },
      { kind: "paragraph", text: `Forgotten your password? Ask for a new one at ${input.resetUrl}` },
      { kind: "paragraph", text: "Did not try to sign up? Then ignore this e-mail: nothing has changed on your account." },
    ],
    footer: FOOTER,
  });
}
