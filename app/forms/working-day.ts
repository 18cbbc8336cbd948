import { z } from "zod";

// The dispatcher's changes to a working day, from the calendar's day panel: close the whole
// day or one crew's day (with a note), set the day's capacity, or reopen. One schema per
// form, told apart by `intent`; messages sit at the field they concern.

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

function isCalendarDate(value: string): boolean {
  if (!ISO_DATE.test(value)) return false;
  const [y, m, d] = value.split("-").map(Number);
  const date = new Date(Date.UTC(y, m - 1, d));
  return date.getUTCFullYear() === y && date.getUTCMonth() === m - 1 && date.getUTCDate() === d && y >= 1900 && y <= 2999;
}

const date = z.string({ error: "Choose the day." }).refine(isCalendarDate, "Choose a day on the calendar (YYYY-MM-DD).");
const crewId = z
  .string({ error: "Choose the crew." })
  .regex(/^[1-9]\d{0,15}$/, "Choose the crew.")
  .transform(Number);
const requiredNote = (what: string) =>
  z
    .string({ error: `Say why ${what} is closed.` })
    .trim()
    .min(3, `Say why ${what} is closed, e.g. “Holiday” or “Rain all day”.`)
    .max(300, "Keep the note under 300 characters.");
const optionalNote = z
  .string()
  .trim()
  .max(300, "Keep the note under 300 characters.")
  .optional()
  .transform((v) => (v ? v : null));

export const closeDaySchema = z.object({ intent: z.literal("close_day"), date, note: requiredNote("the day") });
export const reopenDaySchema = z.object({ intent: z.literal("reopen_day"), date });
export const closeCrewDaySchema = z.object({ intent: z.literal("close_crew_day"), date, crewId, note: requiredNote("the crew's day") });
export const reopenCrewDaySchema = z.object({ intent: z.literal("reopen_crew_day"), date, crewId });
export const setCapacitySchema = z.object({
  intent: z.literal("set_capacity"),
  date,
  // Empty: back to the crews' estimate.
  capacity: z.preprocess(
    (v) => (v === undefined || v === null || (typeof v === "string" && v.trim() === "") ? null : typeof v === "string" ? Number(v.trim()) : v),
    z
      .number({ error: "Enter the colonies as a whole number, or leave it empty for the crews' estimate." })
      .int("Enter the colonies as a whole number.")
      .min(0, "The capacity cannot be below 0 colonies.")
      .max(5000, "Enter at most 5,000 colonies.")
      .nullable(),
  ),
  note: optionalNote,
});

export const workingDaySchema = z.discriminatedUnion(
  "intent",
  [closeDaySchema, reopenDaySchema, closeCrewDaySchema, reopenCrewDaySchema, setCapacitySchema],
  { error: "Choose what to change: close or reopen the day or a crew's day, or set the capacity." },
);

export type WorkingDayChange = z.output<typeof workingDaySchema>;
