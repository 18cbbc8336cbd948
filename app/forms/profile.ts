import { z } from "zod";
import { newPasswordSchema } from "./account";

// The forms of a person's own account: the profile page (name and phone, password, e-mail)
// and account recovery (forgot password, the reset link's page). Shared by the browser
// (instant messages) and the server. A new password gets the length rules here; the server
// also refuses guessable ones (passwordProblem in app/services/password-rules.server.ts).

const email = (empty: string) =>
  z.string().trim().toLowerCase().min(1, empty).max(254, "Keep the e-mail address under 254 characters.").email("Enter a valid e-mail address.");

/** What was typed in the "current password" field; checked against the account on the server. */
const currentPassword = z.string().min(1, "Enter your current password.");

export const forgotPasswordSchema = z.object({
  email: email("Enter the e-mail address you sign in with."),
});

/** The reset link's page: the new password, twice. */
export const passwordResetSchema = z
  .object({
    password: newPasswordSchema,
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

export const PROFILE_INTENTS = ["details", "password", "email"] as const;
export type ProfileIntent = (typeof PROFILE_INTENTS)[number];

export const profileDetailsSchema = z.object({
  name: z.string().trim().min(2, "Enter your name.").max(120, "Keep the name under 120 characters."),
  phone: z
    .string()
    .trim()
    .max(40, "Keep the phone number under 40 characters.")
    .regex(/^[0-9+()\-. ]*$/, "Use digits, spaces and + ( ) - only.")
    .optional()
    .transform((v) => (v ? v : null)),
});

export const passwordChangeSchema = z
  .object({
    currentPassword,
    password: newPasswordSchema,
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." })
  .refine((v) => v.password !== v.currentPassword, { path: ["password"], message: "Choose a password different from the current one." });

export const emailChangeSchema = z.object({
  newEmail: email("Enter the new e-mail address."),
  currentPassword,
});

/** Which of the profile's forms was sent (a hidden field), or null when none of them. */
export function profileIntentOf(value: unknown): ProfileIntent | null {
  return typeof value === "string" && (PROFILE_INTENTS as readonly string[]).includes(value) ? (value as ProfileIntent) : null;
}

/** How long a password reset link works, in minutes. */
export const RESET_LINK_MINUTES = 60;
