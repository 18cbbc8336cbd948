import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { z } from "zod";
import { findSessionUser, normaliseEmail, verifyCredentials, type SessionUser } from "~/models/users.server";
import { db } from "./db.server";
import { checkPasswordWithinLimits, clientAddress, SignInTooSoon, waitText } from "./sign-in-limits.server";

/** A sign-in failure with the field it belongs to, shown next to that field. */
export class SignInError extends Error {
  constructor(
    message: string,
    readonly field: "email" | "password" | "form",
  ) {
    super(message);
  }
}

export const signInSchema = z.object({
  email: z.string().trim().min(1, "Enter your e-mail address.").email("Enter a valid e-mail address."),
  password: z.string().min(1, "Enter your password."),
});

function tooSoonMessage(error: SignInTooSoon): string {
  const wait = waitText(error.waitMs);
  return error.reason === "network"
    ? `Too many failed sign-ins from your network. Try again in ${wait}, or use “Forgot your password?” below.`
    : `Too many failed sign-ins. Try again in ${wait}, or use “Forgot your password?” below.`;
}

export const authenticator = new Authenticator<SessionUser>();

authenticator.use(
  new FormStrategy(async ({ form, request }) => {
    const parsed = signInSchema.safeParse({ email: form.get("email"), password: form.get("password") });
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      throw new SignInError(issue.message, issue.path[0] === "password" ? "password" : "email");
    }
    const email = normaliseEmail(parsed.data.email);
    let userId: string | null;
    try {
      // The try is counted before the password is checked (see sign-in-limits.server.ts).
      userId = await checkPasswordWithinLimits(email, clientAddress(request), () => verifyCredentials(db, email, parsed.data.password));
    } catch (error) {
      if (error instanceof SignInTooSoon) throw new SignInError(tooSoonMessage(error), "form");
      throw error;
    }
    if (!userId) throw new SignInError("That e-mail and password do not match an account.", "password");
    const user = await findSessionUser(db, userId);
    if (!user) throw new SignInError("This account is disabled.", "form");
    return user;
  }),
  "form",
);
