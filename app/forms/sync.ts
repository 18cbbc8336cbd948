import { z } from "zod";
import { BOX_TYPES, MAX_BROOD_BOXES, MIN_BROOD_BOXES } from "~/domain/box-types";
import { AIR_TEMP_MAX_C, AIR_TEMP_MIN_C } from "~/domain/treatment-guards";
import { MAX_SAMPLE_ML, MIN_SAMPLE_ML } from "~/domain/mites";
import { roundTo } from "~/domain/units";

// What a crew's phone sends: one schema per kind of change (safety check, supers off, a
// colony's tally with what the crew found at the hive, the air temperature at the yard,
// finishing a visit), shared by the phone (to check before queueing) and
// the server (app/models/tallies.server.ts). Every change carries an idempotency key; the
// envelope may also carry the run id and version the phone saw, and when it was made.

export const SKIP_REASON_VALUES = ["dead_out", "queenless", "supers_on", "aggressive", "not_reachable", "other"] as const;
export const SYNC_KINDS = ["safety", "supers", "tally", "air_temp", "finish"] as const;
export type SyncKind = (typeof SYNC_KINDS)[number];

/** Most changes a phone may send in one batch. */
export const MAX_SYNC_BATCH = 500;

/** Empty text (or whitespace) counts as not given. */
function emptyAsNull(value: unknown) {
  if (value === undefined || value === null) return null;
  if (typeof value === "string" && value.trim() === "") return null;
  return value;
}

/** A whole number from a number or numeric text (forms send text), or null when not given. */
function optionalWholeNumber(what: string, min: number, max: number) {
  return z.preprocess(
    (value) => {
      const v = emptyAsNull(value);
      return typeof v === "string" && /^\s*\d+\s*$/.test(v) ? Number(v) : v;
    },
    z
      .number({ error: `Enter ${what} as a whole number.` })
      .int({ error: `Enter ${what} as a whole number.` })
      .min(min, { error: `Enter ${what} from ${min} to ${max}.` })
      .max(max, { error: `Enter ${what} from ${min} to ${max}.` })
      .nullable(),
  );
}

/** A number (decimals allowed) from a number or numeric text, or null when not given. */
function optionalNumber(what: string, min: number, max: number, unit: string) {
  return z.preprocess(
    (value) => {
      const v = emptyAsNull(value);
      return typeof v === "string" && /^\s*\d+(\.\d+)?\s*$/.test(v) ? Number(v) : v;
    },
    z
      .number({ error: `Enter ${what} as a number of ${unit}.` })
      .refine(Number.isFinite, { error: `Enter ${what} as a number of ${unit}.` })
      .min(min, { error: `Enter ${what} from ${min} to ${max} ${unit}.` })
      .max(max, { error: `Enter ${what} from ${min} to ${max} ${unit}.` })
      .nullable(),
  );
}

function optionalText(what: string, max: number) {
  return z.preprocess(
    emptyAsNull,
    z
      .string({ error: `Enter ${what} as text.` })
      .trim()
      .max(max, { error: `Keep ${what} under ${max} characters.` })
      .nullable(),
  );
}

/** A database id: a whole number ≥ 1 (numeric text accepted). */
export const idSchema = z.preprocess(
  (value) => (typeof value === "string" && /^\d+$/.test(value) ? Number(value) : value),
  z.number({ error: "Not a valid id." }).int({ error: "Not a valid id." }).positive({ error: "Not a valid id." }).max(Number.MAX_SAFE_INTEGER),
);

/** An idempotency key: made on the phone (e.g. "tally-<uuid>"), unique per change. */
export const changeKeySchema = z
  .string({ error: "Every change needs its key." })
  .trim()
  .min(8, { error: "A change key has at least 8 characters." })
  .max(200, { error: "A change key has at most 200 characters." })
  .regex(/^[A-Za-z0-9._:-]+$/, { error: "A change key uses letters, digits and . _ : - only." });

/** An instant written as ISO 8601 text (or a Date), as the phone recorded it. */
export const instantSchema = z.preprocess(
  (value) => (typeof value === "string" ? new Date(value) : value),
  z.date({ error: "Give the time as an ISO date and time." }).refine((d) => !Number.isNaN(d.getTime()), { error: "Give the time as an ISO date and time." }),
);

export const safetyItemsSchema = z.object(
  {
    respirator: z.boolean({ error: "Tick the respirator." }),
    eyeProtection: z.boolean({ error: "Tick the eye protection." }),
    gloves: z.boolean({ error: "Tick the gloves." }),
    vaporizerReady: z.boolean({ error: "Tick the vaporizer." }),
  },
  { error: "Tick the safety check." },
);
export type SafetyItemsInput = z.output<typeof safetyItemsSchema>;

export const safetyPayloadSchema = z.object({ runId: idSchema, items: safetyItemsSchema });
export const supersPayloadSchema = z.object({ visitId: idSchema });

/** The brood boxes a crew can record on a colony at the hive. */
export { MAX_BROOD_BOXES, MIN_BROOD_BOXES };

/** Not given (undefined, null or empty text) reads as undefined: no correction. */
function emptyAsUndefined(value: unknown) {
  const v = emptyAsNull(value);
  return v === null ? undefined : v;
}

/** Whether brood was seen: true/false (or "true"/"false" from a form), null when not said. */
const broodSeenSchema = z.preprocess(
  (value) => (value === "true" ? true : value === "false" ? false : value === undefined || value === "" ? null : value),
  z.boolean({ error: "Say whether brood was seen: yes, no, or not looked." }).nullable(),
);

/**
 * One colony's tally. A skipped colony needs a reason ("other" also a note). A wash count
 * needs the mites and either the bees counted or the sample's volume in mL (the bees are then
 * estimated from the bees-per-100 mL setting); bees counted win when both are given.
 */
export const tallyPayloadSchema = z
  .object({
    visitId: idSchema,
    colonyLabel: z.string({ error: "Say which colony." }).trim().min(1, { error: "Say which colony." }).max(50, { error: "A colony label has at most 50 characters." }),
    outcome: z.enum(["treated", "skipped"], { error: "Mark the colony treated or skipped." }),
    skipReason: z.preprocess(emptyAsNull, z.enum(SKIP_REASON_VALUES, { error: "Choose why the colony was skipped." }).nullable()),
    skipNote: optionalText("the note", 500),
    mites: optionalWholeNumber("the mites counted", 0, 10_000),
    beesSampled: optionalWholeNumber("the bees sampled", 1, 10_000),
    // Optional on the wire: phones that predate wash volumes never send it.
    sampleMl: optionalNumber("the sample volume", MIN_SAMPLE_ML, MAX_SAMPLE_ML, "mL").optional().transform((v) => v ?? null),
    notes: optionalText("the notes", 2000),
    recordedAt: instantSchema,
    // What the crew found at the hive, when it differs from the colony on record: the colony
    // is corrected and dosed from these. Optional on the wire (older phones never send them).
    broodBoxes: z
      .preprocess(
        (value) => {
          const v = emptyAsUndefined(value);
          return typeof v === "string" && /^\s*\d+\s*$/.test(v) ? Number(v) : v;
        },
        z
          .number({ error: "Enter the brood boxes as a whole number." })
          .int({ error: "Enter the brood boxes as a whole number." })
          .min(MIN_BROOD_BOXES, { error: `Enter the brood boxes from ${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES}.` })
          .max(MAX_BROOD_BOXES, { error: `Enter the brood boxes from ${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES}.` })
          .optional(),
      )
      .transform((v) => v ?? null),
    boxType: z
      .preprocess(emptyAsUndefined, z.enum(BOX_TYPES, { error: "Choose the box type: deep, medium or nuc." }).optional())
      .transform((v) => v ?? null),
    broodSeen: broodSeenSchema.optional().transform((v) => v ?? null),
  })
  .superRefine((tally, ctx) => {
    if (tally.outcome === "skipped" && !tally.skipReason) {
      ctx.addIssue({ code: "custom", path: ["skipReason"], message: "Choose why the colony was skipped." });
    }
    if (tally.outcome === "skipped" && tally.skipReason === "other" && !tally.skipNote) {
      ctx.addIssue({ code: "custom", path: ["skipNote"], message: "Say why the colony was skipped." });
    }
    if (tally.mites !== null && tally.beesSampled === null && tally.sampleMl === null) {
      ctx.addIssue({ code: "custom", path: ["beesSampled"], message: "Enter how many bees were in the sample, or the sample's volume in mL." });
    }
    if ((tally.beesSampled !== null || tally.sampleMl !== null) && tally.mites === null) {
      ctx.addIssue({ code: "custom", path: ["mites"], message: "Enter how many mites were counted (0 if none)." });
    }
  })
  // A treated colony has no skip reason; a reason left over from a change of mind is dropped.
  .transform((tally) => (tally.outcome === "treated" ? { ...tally, skipReason: null, skipNote: null } : tally));
export type TallyPayload = z.output<typeof tallyPayloadSchema>;

export const finishPayloadSchema = z.object({
  visitId: idSchema,
  weatherNote: optionalText("the weather note", 500),
  notes: optionalText("the notes", 2000),
});

export { AIR_TEMP_MAX_C, AIR_TEMP_MIN_C };
const AIR_TEMP_RANGE = `Enter the air temperature from ${AIR_TEMP_MIN_C} to ${AIR_TEMP_MAX_C} °C.`;

/** The air temperature read at the yard, stored in °C to 0.1 (the phone converts °F before sending). */
export const airTempPayloadSchema = z.object({
  visitId: idSchema,
  airTempC: z.preprocess(
    (value) => (typeof value === "string" && /^\s*-?\d+(\.\d+)?\s*$/.test(value) ? Number(value) : value),
    z
      .number({ error: "Enter the air temperature as a number." })
      .refine(Number.isFinite, { error: "Enter the air temperature as a number." })
      .min(AIR_TEMP_MIN_C, { error: AIR_TEMP_RANGE })
      .max(AIR_TEMP_MAX_C, { error: AIR_TEMP_RANGE })
      .transform((c) => roundTo(c, 1)),
  ),
});

const envelope = {
  key: changeKeySchema,
  /** The run the phone had the stop on, and that run's version, when it made the change. */
  runId: idSchema.optional(),
  runVersion: z.number().int().min(1).optional(),
  /** When the change was made on the phone (ISO). */
  createdAt: instantSchema.optional(),
};

export const syncChangeSchema = z.discriminatedUnion(
  "kind",
  [
    z.object({ ...envelope, kind: z.literal("safety"), payload: safetyPayloadSchema }),
    z.object({ ...envelope, kind: z.literal("supers"), payload: supersPayloadSchema }),
    z.object({ ...envelope, kind: z.literal("tally"), payload: tallyPayloadSchema }),
    z.object({ ...envelope, kind: z.literal("air_temp"), payload: airTempPayloadSchema }),
    z.object({ ...envelope, kind: z.literal("finish"), payload: finishPayloadSchema }),
  ],
  { error: "A change is a safety check, supers off, a tally, an air temperature or a finish." },
);
export type SyncChange = z.output<typeof syncChangeSchema>;
/** A change as the phone sends it (before parsing). */
export type SyncChangeInput = z.input<typeof syncChangeSchema>;

/** The batch as posted: each change is checked on its own, so one bad change refuses only itself. */
export const syncBatchSchema = z.object({
  changes: z
    .array(z.unknown(), { error: "Send the changes as a list." })
    .max(MAX_SYNC_BATCH, { error: `Send at most ${MAX_SYNC_BATCH} changes at a time.` }),
});
