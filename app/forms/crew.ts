import { z } from "zod";
import { WEEKDAYS } from "~/domain/capacity";

// A crew as the dispatcher enters it: who is on it, where it starts and ends its day, its
// hours, kit and daily limits, the weekdays it works, and whether it works at all. One
// schema for the browser and the server; every message is written for the field it sits at.

const CLOCK = /^([01]\d|2[0-3]):([0-5]\d)$/;

function clockMinutes(text: string): number {
  return Number(text.slice(0, 2)) * 60 + Number(text.slice(3, 5));
}

/** A form's text as a number (NaN when empty or missing, so the number check words the message). */
function numberFrom(label: string) {
  return z.preprocess(
    (v) => (typeof v === "string" && v.trim() !== "" ? Number(v.trim()) : v === undefined || v === "" ? Number.NaN : v),
    z.number({ error: `Enter ${label} as a number.` }).refine(Number.isFinite, `Enter ${label} as a number.`),
  );
}

/** An optional number: empty means none (null). */
function optionalNumberFrom(label: string) {
  return z.preprocess(
    (v) => (v === undefined || v === null || (typeof v === "string" && v.trim() === "") ? null : typeof v === "string" ? Number(v.trim()) : v),
    z.number({ error: `Enter ${label} as a number, or leave it empty.` }).refine(Number.isFinite, `Enter ${label} as a number, or leave it empty.`).nullable(),
  );
}

function optionalText(max: number, message: string) {
  return z
    .string()
    .trim()
    .max(max, message)
    .optional()
    .transform((v) => (v ? v : null));
}

/** Repeated form fields (checkboxes) as a list; one value comes as a string, none as undefined. */
function listOf<T extends z.ZodTypeAny>(item: T) {
  return z.preprocess((v) => (v === undefined || v === null || v === "" ? [] : Array.isArray(v) ? v : [v]), z.array(item));
}

const latitude = (which: string) =>
  numberFrom(`the ${which} latitude`).pipe(z.number().min(-90, "Latitude is between −90 and 90.").max(90, "Latitude is between −90 and 90."));
const longitude = (which: string) =>
  numberFrom(`the ${which} longitude`).pipe(z.number().min(-180, "Longitude is between −180 and 180.").max(180, "Longitude is between −180 and 180."));

export const crewSchema = z
  .object({
    name: z.string({ error: "Give the crew a name." }).trim().min(1, "Give the crew a name, e.g. “Crew 3”.").max(60, "Keep the name under 60 characters."),
    memberIds: listOf(z.string().regex(/^[1-9]\d{0,15}$/, "Choose crew members from the list.").transform(Number)).pipe(
      z.array(z.number()).max(6, "A crew has at most 6 members."),
    ),
    startLabel: z.string({ error: "Name the start point." }).trim().min(1, "Name the start point, e.g. “Shop, 12 Kiln Lane”.").max(120, "Keep the name under 120 characters."),
    startLat: latitude("start"),
    startLng: longitude("start"),
    endLabel: optionalText(120, "Keep the name under 120 characters."),
    endLat: optionalNumberFrom("the end latitude").pipe(z.number().min(-90, "Latitude is between −90 and 90.").max(90, "Latitude is between −90 and 90.").nullable()),
    endLng: optionalNumberFrom("the end longitude").pipe(z.number().min(-180, "Longitude is between −180 and 180.").max(180, "Longitude is between −180 and 180.").nullable()),
    workStart: z.string({ error: "Enter when the working day starts." }).regex(CLOCK, "Enter the start as a time of day, e.g. 08:00."),
    workEnd: z.string({ error: "Enter when the working day ends." }).regex(CLOCK, "Enter the end as a time of day, e.g. 17:00."),
    vaporizers: numberFrom("the vaporizers").pipe(
      z.number().int("Vaporizers are counted whole.").min(1, "A crew carries at least 1 vaporizer.").max(10, "Enter at most 10 vaporizers."),
    ),
    maxColoniesPerDay: optionalNumberFrom("the most colonies a day").pipe(
      z.number().int("Colonies are counted in whole hives.").min(1, "The most colonies a day must be at least 1; leave it empty for no limit.").max(1000, "Enter at most 1,000 colonies a day.").nullable(),
    ),
    maxDoseGramsPerDay: optionalNumberFrom("the most grams a day").pipe(
      z
        .number()
        .min(0.01, "The most grams a day must be more than 0; leave it empty for no limit.")
        .max(99999, "Enter at most 99,999 g a day.")
        .refine((g) => Math.abs(Math.round(g * 100) - g * 100) < 1e-6, "Enter grams to two decimals at most.")
        .nullable(),
    ),
    workingWeekdays: listOf(z.enum(["1", "2", "3", "4", "5", "6", "7"], { error: "Choose weekdays from the list." }).transform(Number)).pipe(
      z.array(z.number()).min(1, "Tick at least one weekday the crew works."),
    ),
    active: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()),
  })
  .superRefine((crew, ctx) => {
    if (CLOCK.test(crew.workStart) && CLOCK.test(crew.workEnd) && clockMinutes(crew.workEnd) <= clockMinutes(crew.workStart)) {
      ctx.addIssue({ code: "custom", message: "The working day must end after it starts.", path: ["workEnd"] });
    }
    // An end point is both coordinates or neither (then the crew ends where it started).
    if (crew.endLat === null && crew.endLng !== null) ctx.addIssue({ code: "custom", message: "Enter the end latitude too, or clear both.", path: ["endLat"] });
    if (crew.endLng === null && crew.endLat !== null) ctx.addIssue({ code: "custom", message: "Enter the end longitude too, or clear both.", path: ["endLng"] });
    if (crew.endLabel !== null && crew.endLat === null && crew.endLng === null) {
      ctx.addIssue({ code: "custom", message: "Place the end point on the map or type its coordinates, or clear its name.", path: ["endLat"] });
    }
    if (new Set(crew.memberIds).size !== crew.memberIds.length) ctx.addIssue({ code: "custom", message: "Choose each member once.", path: ["memberIds"] });
  });

export type CrewInput = z.output<typeof crewSchema>;

/** The form's fields as text (what the browser sent, or a saved crew written out). */
export type CrewFormValues = {
  name?: string;
  memberIds?: string[];
  startLabel?: string;
  startLat?: string;
  startLng?: string;
  endLabel?: string;
  endLat?: string;
  endLng?: string;
  workStart?: string;
  workEnd?: string;
  vaporizers?: string;
  maxColoniesPerDay?: string;
  maxDoseGramsPerDay?: string;
  workingWeekdays?: string[];
  active?: string;
};

/** A new crew's form: Monday to Friday, 08:00–17:00, two vaporizers, active. */
export const NEW_CREW_VALUES: CrewFormValues = {
  memberIds: [],
  workStart: "08:00",
  workEnd: "17:00",
  vaporizers: "2",
  workingWeekdays: ["1", "2", "3", "4", "5"],
  active: "on",
};

/** What the form sent, as CrewFormValues (repeated fields as lists), to show back on error. */
export function crewFormValuesFrom(fields: Record<string, string | string[]>): CrewFormValues {
  const one = (k: string) => {
    const v = fields[k];
    return Array.isArray(v) ? v[0] : v;
  };
  const many = (k: string) => {
    const v = fields[k];
    return v === undefined ? [] : Array.isArray(v) ? v : [v];
  };
  return {
    name: one("name"),
    memberIds: many("memberIds"),
    startLabel: one("startLabel"),
    startLat: one("startLat"),
    startLng: one("startLng"),
    endLabel: one("endLabel"),
    endLat: one("endLat"),
    endLng: one("endLng"),
    workStart: one("workStart"),
    workEnd: one("workEnd"),
    vaporizers: one("vaporizers"),
    maxColoniesPerDay: one("maxColoniesPerDay"),
    maxDoseGramsPerDay: one("maxDoseGramsPerDay"),
    workingWeekdays: many("workingWeekdays"),
    active: one("active") ?? "",
  };
}

/** The weekday checkboxes' choices. */
export const WEEKDAY_CHOICES = WEEKDAYS.map((d) => ({ value: String(d.day), short: d.short, name: d.name }));
