import { z } from "zod";

// Password length rules, shared by the browser and the server. The server also refuses
// common and easily guessed passwords (passwordProblem in app/services/password-rules.server.ts),
// a check kept out of the browser so its word lists are not shipped to every visitor.

export const PASSWORD_MIN_CHARACTERS = 10;
/** bcrypt reads the first 72 bytes of a password and silently ignores the rest. */
export const PASSWORD_MAX_BYTES = 72;

/** What is wrong with a new password's length, or null. Characters are counted as a person counts them (an emoji is one). */
export function passwordLengthProblem(password: string): string | null {
  if ([...password].length < PASSWORD_MIN_CHARACTERS) return `Use at least ${PASSWORD_MIN_CHARACTERS} characters.`;
  if (new TextEncoder().encode(password).length > PASSWORD_MAX_BYTES) {
    return `Keep the password to ${PASSWORD_MAX_BYTES} bytes: letters and digits without accents count 1 each, accented letters 2, emoji 4.`;
  }
  return null;
}

/** A new password: the length rules, as a zod field. */
export const newPasswordSchema = z.string().superRefine((password, ctx) => {
  const problem = passwordLengthProblem(password);
  if (problem) ctx.addIssue({ code: "custom", message: problem });
});

/** Customer self sign-up; shared by the browser (instant messages) and the server. */
export const signUpSchema = z
  .object({
    name: z.string().trim().min(2, "Enter your name.").max(120, "Keep the name under 120 characters."),
    email: z.string().trim().toLowerCase().min(1, "Enter your e-mail address.").email("Enter a valid e-mail address."),
    phone: z
      .string()
      .trim()
      .max(40, "Keep the phone number under 40 characters.")
      .regex(/^[0-9+()\-. ]*$/, "Use digits, spaces and + ( ) - only.")
      .optional()
      .transform((v) => (v ? v : null)),
    password: newPasswordSchema,
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

export type SignUpInput = z.infer<typeof signUpSchema>;
