import type { FormEvent } from "react";
import type { z } from "zod";
import { fieldErrors, formValues, type FieldErrors } from "./field-errors";

// The browser's check of a form with the same zod schema the action uses, so a person sees
// the messages at once, without a round trip. The action still checks everything: this only
// spares the post when the schema already refuses it.
// Not for the crew screens: their content security policy forbids eval, and zod may need it.

/** The schema's first message per field for these form values, or null when the schema accepts them. */
export function problemsBeforeSending(schema: z.ZodType, form: FormData): FieldErrors | null {
  const parsed = schema.safeParse(formValues(form));
  return parsed.success ? null : fieldErrors(parsed.error);
}

/**
 * An onSubmit handler: checks the form with `schema`; when it fails, stops the post and hands
 * the messages to `setErrors`; when it passes, clears them (null) and lets the post go.
 */
export function checkBeforeSending(schema: z.ZodType, setErrors: (errors: FieldErrors | null) => void) {
  return (event: FormEvent<HTMLFormElement>) => {
    const problems = problemsBeforeSending(schema, new FormData(event.currentTarget));
    if (problems) event.preventDefault();
    setErrors(problems);
  };
}
