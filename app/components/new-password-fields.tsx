import { Field } from "~/components/ui/field";
import type { FieldErrors } from "~/forms/field-errors";

// The pair of fields wherever someone chooses a password (sign-up, invitation, reset, profile):
// the password and the same again, posted as "password" and "confirm" for the forms' schemas.

/** What the server's password rules (password-rules.server.ts) ask for, said once for every form. */
const PASSWORD_RULES = "At least 10 characters, not a common password, and not your name or e-mail.";

export function NewPasswordFields({
  label = "Password",
  errors,
  advice = "A few words that do not belong together work well.",
}: {
  /** The first field's label; the second one's is the same with "again". */
  label?: string;
  /** Field errors of the form; the messages under "password" and "confirm" show here. */
  errors: FieldErrors;
  /** Said after the rules in the first field's hint. */
  advice?: string;
}) {
  return (
    <>
      <Field label={label} name="password" type="password" autoComplete="new-password" required error={errors.password} hint={`${PASSWORD_RULES} ${advice}`} />
      <Field label={`${label} again`} name="confirm" type="password" autoComplete="new-password" required error={errors.confirm} />
    </>
  );
}
