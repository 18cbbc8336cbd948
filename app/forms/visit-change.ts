import { z } from "zod";

export const rescheduleSchema = z.object({
  intent: z.literal("reschedule"),
  toDate: z.string({ error: "Choose the new day." }).regex(/^\d{4}-\d{2}-\d{2}$/, "Choose the new day."),
  reason: z
    .string()
    .trim()
    .max(500, "Keep the reason under 500 characters.")
    .optional()
    .transform((v) => (v ? v : null)),
});

export const cancelSchema = z.object({
  intent: z.literal("cancel"),
  reason: z.string({ error: "Say why the visit is cancelled." }).trim().min(3, "Say why the visit is cancelled; the customer is told.").max(500, "Keep the reason under 500 characters."),
});

export const timeOfDaySchema = z.object({
  intent: z.literal("time"),
  timePreference: z.enum(["any", "morning", "afternoon"], { error: "Choose any time, morning or afternoon." }),
});

export const visitChangeSchema = z.discriminatedUnion("intent", [rescheduleSchema, cancelSchema, timeOfDaySchema], { error: "Choose move, cancel or a time of day." });
