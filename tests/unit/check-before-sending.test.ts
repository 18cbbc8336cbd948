import { describe, expect, it } from "vitest";
import { signUpSchema } from "~/forms/account";
import { problemsBeforeSending } from "~/forms/check-before-sending";
import { forgotPasswordSchema, passwordResetSchema } from "~/forms/profile";

function form(values: Record<string, string>): FormData {
  const out = new FormData();
  for (const [name, value] of Object.entries(values)) out.append(name, value);
  return out;
}

const GOOD_PASSWORD = "quiet walnut harbour drift";

describe("the browser's check of a form before it is sent", () => {
  it("lets a form the schema accepts go, with no messages", () => {
    expect(problemsBeforeSending(forgotPasswordSchema, form({ email: "someone@example.test" }))).toBeNull();
    expect(
      problemsBeforeSending(
        signUpSchema,
        form({ name: "Test Person", email: "person@example.test", phone: "", password: GOOD_PASSWORD, confirm: GOOD_PASSWORD }),
      ),
    ).toBeNull();
  });

  it("gives the schema's own message at the field that caused it", () => {
    expect(problemsBeforeSending(forgotPasswordSchema, form({ email: "not an address" }))).toEqual({ email: "Enter a valid e-mail address." });
  });

  it("puts a message from a check across fields at the field the schema names", () => {
    expect(problemsBeforeSending(passwordResetSchema, form({ password: GOOD_PASSWORD, confirm: `${GOOD_PASSWORD}!` }))).toEqual({
      confirm: "The two passwords differ.",
    });
  });

  it("keeps the first message of each field, for every field that fails", () => {
    const problems = problemsBeforeSending(signUpSchema, form({ name: "", email: "", phone: "call me", password: GOOD_PASSWORD, confirm: GOOD_PASSWORD }));
    // An empty address breaks both "not empty" and "valid address": only the first is shown.
    expect(problems).toEqual({ name: "Enter your name.", email: "Enter your e-mail address.", phone: "Use digits, spaces and + ( ) - only." });
  });

  it("leaves uploaded files out, as the server's reading of the form does", () => {
    const withFile = form({ email: "someone@example.test" });
    withFile.append("email", new Blob(["not text"]), "note.txt");
    expect(problemsBeforeSending(forgotPasswordSchema, withFile)).toBeNull();
  });
});
