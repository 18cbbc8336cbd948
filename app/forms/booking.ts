import { z } from "zod";

const isoDate = /^\d{4}-\d{2}-\d{2}$/;

/** A customer's booking: one or more of their yards on one day, with a time of day. */
export const bookingSchema = z.object({
  yardIds: z
    .array(z.coerce.number().int().positive(), { error: "Choose at least one yard." })
    .min(1, "Choose at least one yard.")
    .max(20, "Book at most 20 yards at once."),
  serviceDate: z.string({ error: "Choose a day on the calendar." }).regex(isoDate, "Choose a day on the calendar."),
  timePreference: z.enum(["any", "morning", "afternoon"], { error: "Choose a time of day." }),
  notes: z
    .string()
    .trim()
    .max(1000, "Keep the note under 1,000 characters.")
    .optional()
    .transform((v) => (v ? v : null)),
});

export type BookingInput = z.output<typeof bookingSchema>;

/** FormData values (yardIds may repeat) as the schema's input. */
export function bookingInputFromForm(values: Record<string, string | string[]>) {
  const yardIds = values.yardIds === undefined ? [] : Array.isArray(values.yardIds) ? values.yardIds : [values.yardIds];
  return { ...values, yardIds };
}
