import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { z } from "zod";
import { findSessionUser, normaliseEmail, verifyCredentials, type SessionUser } from "~/models/users.server";
import { db } from "./db.server";
import { clearFailedSignIns, clientAddress, recordFailedSignIn, signInBlockedMinutes } from "./sign-in-limits.server";

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

export const authenticator = new Authenticator<SessionUser>();

authenticator.use(
  new FormStrategy(async ({ form, request }) => {
    const parsed = signInSchema.safeParse({ email: form.get("email"), password: form.get("password") });
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      throw new SignInError(issue.message, issue.path[0] === "password" ? "password" : "email");
    }
    const email = normaliseEmail(parsed.data.email);
    const address = clientAddress(request);
    const waitMinutes = await signInBlockedMinutes(email, address);
    if (waitMinutes > 0) {
      throw new SignInError(
        `Too many failed sign-ins. Try again in ${waitMinutes} minute${waitMinutes === 1 ? "" : "s"}, or ask the office to reset your password.`,
        "form",
      );
    }
    const userId = await verifyCredentials(db, email, parsed.data.password);
    if (!userId) {
      await recordFailedSignIn(email, address);
      throw new SignInError("That e-mail and password do not match an account.", "password");
    }
    await clearFailedSignIns(email);
    const user = await findSessionUser(db, userId);
    if (!user) throw new SignInError("This account is disabled.", "form");
    return user;
  }),
  "form",
);
