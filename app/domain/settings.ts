/**
 * The business's operative settings: one zod schema with defaults, per-field validation
 * messages, and a description of every field for the settings page.
 *
 * The figures here are the business's own; defaults are starting points taken from the
 * sources named in `settingsFieldInfo`. The product label and local rules always win.
 */

import { z } from "zod";
import { checkVaporizerBand } from "./chemistry";
import { BOX_TYPES, BOX_TYPE_LABELS, DOSE_RATE_FIELD } from "./box-types";
import { doseRateProblems, gramsToCentigrams, roundDoseGrams } from "./dose";
import { plannedCourseSpanProblem } from "./treatment-guards";
import { monthsWithSeveralThresholds, monthsWithoutThreshold, type MiteThreshold } from "./mites";

const MONTH_NAMES = [
  "January", "February", "March", "April", "May", "June",
  "July", "August", "September", "October", "November", "December",
] as const;

function numberField(label: string, min: number, max: number, unit = "") {
  const suffix = unit ? ` ${unit}` : "";
  // NaN (an empty field, see settings-form.ts) is taken as a number and refused by a
  // refinement: zod 4 treats a NaN type error as aborting, which would skip the cross-field
  // checks below and hide their messages until this field is filled in.
  return z
    .union([z.number(), z.nan()], { error: `Enter ${label} as a number.` })
    .refine(Number.isFinite, { error: `Enter ${label} as a number.` })
    .refine((v) => !Number.isFinite(v) || v >= min, { error: `${capitalise(label)} must be at least ${min}${suffix}.` })
    .refine((v) => !Number.isFinite(v) || v <= max, { error: `${capitalise(label)} must be at most ${max}${suffix}.` });
}

function wholeNumberField(label: string, min: number, max: number, unit = "") {
  // A refinement rather than .int(): zod 4 treats a failed .int() as aborting, which would
  // skip the cross-field checks below and hide their messages until this one is fixed.
  return numberField(label, min, max, unit).refine(Number.isInteger, {
    error: `${capitalise(label)} must be a whole number.`,
  });
}

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function isKnownTimeZone(timeZone: string): boolean {
  try {
    new Intl.DateTimeFormat("en-US", { timeZone });
    return true;
  } catch {
    return false;
  }
}

const EMAIL_ADDRESS = /^[^\s@<>]+@[^\s@<>]+\.[^\s@<>]+$/;

/** Empty, or a phone number as people write it: digits with spaces, +, (, ), - and dots. */
function isPhoneNumber(value: string): boolean {
  return value === "" || (/^[0-9+().\-\s]+$/.test(value) && /\d/.test(value));
}

/** One seasonal action threshold (months 1–12, both included; may run over the year end). */
export const miteThresholdSchema = z.object({
  fromMonth: wholeNumberField("the first month", 1, 12),
  toMonth: wholeNumberField("the last month", 1, 12),
  // To 0.1, the precision loads are shown and compared at (mites.ts): a threshold of 2.35
  // would be read as 2.4 anyway.
  mitesPer100: numberField("the threshold", 0.1, 50, "mites per 100 bees").refine((v) => Number.isInteger(Math.round(v * 1e6) / 1e5), {
    error: "Enter the threshold to one decimal place, e.g. 2.5 mites per 100 bees.",
  }),
}, { error: "Enter each threshold's months and mites per 100 bees." });

/**
 * Default seasonal thresholds (mites per 100 bees):
 * Feb–Apr 1 (early season, Mississippi State Univ. Extension);
 * May–Jul 3 (general threshold, USDA-ARS Carl Hayden Bee Research Center);
 * Aug–Oct 3 (autumn, upper end of 2–3, Honey Bee Health Coalition — lower it to 2 to act sooner);
 * Nov–Jan 3 (general threshold, USDA-ARS).
 */
export const DEFAULT_MITE_THRESHOLDS: readonly MiteThreshold[] = [
  { fromMonth: 2, toMonth: 4, mitesPer100: 1 },
  { fromMonth: 5, toMonth: 7, mitesPer100: 3 },
  { fromMonth: 8, toMonth: 10, mitesPer100: 3 },
  { fromMonth: 11, toMonth: 1, mitesPer100: 3 },
];

/**
 * Each setting on its own, with defaults for every field. Saving also needs the rules between
 * settings (businessSettingsSchema); loading settings saved before a rule existed does not.
 */
export const businessSettingsFieldsSchema = z
  .object({
    unitSystem: z.enum(["metric", "us"], { error: "Choose metric or US units." }).default("us"),

    // Printed on invoices, receipts and reports; empty uses the name in MAIL_FROM.
    businessName: z
      .string({ error: "Enter the business name." })
      .trim()
      .max(120, { error: "The business name must be at most 120 characters." })
      .default(""),
    businessAddress: z
      .string({ error: "Enter the business address." })
      .trim()
      .max(300, { error: "The business address must be at most 300 characters." })
      .default(""),
    // Whom a customer calls when changes have closed (portal booking pages); empty: not shown.
    businessPhone: z
      .string({ error: "Enter the business phone number." })
      .trim()
      .max(40, { error: "The phone number must be at most 40 characters." })
      .refine(isPhoneNumber, { error: "Enter the phone number with digits, spaces and + ( ) - . only." })
      .default(""),
    contactEmail: z
      .string({ error: "Enter the contact e-mail address." })
      .trim()
      .max(200, { error: "The contact e-mail address must be at most 200 characters." })
      .refine((value) => value === "" || EMAIL_ADDRESS.test(value), { error: "Enter an e-mail address such as office@example.com." })
      .default(""),
    customerChangeCutoffHours: wholeNumberField("the change cut-off", 0, 336, "hours").default(48),

    doseGramsPerBroodBox: numberField("the dose per brood box", 0.01, 10, "g").default(1),
    doseGramsPerMediumBox: numberField("the dose per medium box", 0.01, 10, "g").default(0.7),
    doseGramsPerNucBox: numberField("the dose per nuc box", 0.01, 10, "g").default(0.5),
    labelMaximumGramsPerBroodBox: numberField("the label maximum per brood box", 0.01, 10, "g").default(1),
    // Ticked on the form by the owner who saves a rate above the label figure; never kept ticked.
    doseAboveLabelConfirmed: z.boolean({ error: "Tick the box or leave it empty." }).default(false),
    vaporizerLoadGrams: numberField("the vaporizer load", 0.1, 20, "g").default(2),
    productName: z
      .string({ error: "Enter the product name." })
      .trim()
      .min(1, { error: "Enter the product name as on its label." })
      .max(200, { error: "The product name must be at most 200 characters." })
      .default("Oxalic acid dihydrate"),
    // Empty until the owner copies it from the label in their hands: a default would be some
    // real product's number, printed on records of a product never used. Setup and the
    // settings page ask for it (registrationNumberProblem); records show it as not entered.
    productRegistrationNumber: z
      .string({ error: "Enter the registration number." })
      .trim()
      .max(100, { error: "The registration number must be at most 100 characters." })
      .default(""),

    roundsWithBrood: wholeNumberField("rounds with brood", 1, 7).default(3),
    roundIntervalDays: wholeNumberField("the interval between rounds", 4, 10, "days").default(7),
    maxApplicationsPerColonyPerSeason: wholeNumberField("applications per colony per season", 1, 20).default(4),
    airTempMinC: numberField("the lowest air temperature", -30, 45, "°C").default(4),
    airTempMaxC: numberField("the highest air temperature", -30, 50, "°C").default(30),
    recordRetentionYears: wholeNumberField("the record retention", 1, 10, "years").default(2),

    miteThresholds: z
      .array(miteThresholdSchema, { error: "Enter the seasonal thresholds." })
      .min(1, { error: "Enter at least one seasonal threshold." })
      .max(12, { error: "Enter at most 12 seasonal thresholds." })
      .default(() => DEFAULT_MITE_THRESHOLDS.map((t) => ({ ...t }))),
    beesPer100Ml: wholeNumberField("bees per 100 mL", 100, 600).default(300),

    sublimationSeconds: numberField("the sublimation time", 5, 300, "s").default(35),
    entranceClosedMinutes: numberField("the time the entrance stays closed", 0, 60, "min").default(10),
    moveBetweenHivesMinutes: numberField("the move between hives", 0, 30, "min").default(2),
    blockReheatSeconds: numberField("the block reheat time", 0, 600, "s").default(60),
    setupMinutes: numberField("the set-up time", 0, 120, "min").default(15),
    vaporizersPerCrew: wholeNumberField("vaporizers per crew", 1, 10).default(2),
    typicalColoniesPerYard: wholeNumberField("the typical colonies per yard", 1, 50).default(5),
    averageDriveMinutesBetweenYards: numberField("the average drive between yards", 0, 180, "min").default(20),
    blockMinC: numberField("the lowest block temperature", 0, 400, "°C").default(230),
    blockMaxC: numberField("the highest block temperature", 0, 400, "°C").default(240),

    circuityFactor: numberField("the road circuity factor", 1, 3).default(1.2),
    averageSpeedKmh: numberField("the average speed", 5, 130, "km/h").default(60),
    timeZone: z
      .string({ error: "Choose the business time zone." })
      .refine(isKnownTimeZone, { error: "Choose a time zone such as America/New_York." })
      .default("America/New_York"),

    pricePerColonyCents: wholeNumberField("the price per colony", 0, 1_000_000, "cents").default(2500),
    tripFeeCents: wholeNumberField("the trip fee", 0, 1_000_000, "cents").default(3500),
    minimumPerVisitCents: wholeNumberField("the minimum per visit", 0, 1_000_000, "cents").default(5000),
    taxRateBasisPoints: wholeNumberField("the tax rate", 0, 3000, "basis points").default(800),
    paymentTermsDays: wholeNumberField("the payment terms", 0, 120, "days").default(14),
    overdueReminderDays: wholeNumberField("the overdue reminder", 1, 90, "days").default(7),
  });

/** The business's operative settings as they may be saved: each field, and the rules between them. */
export const businessSettingsSchema = businessSettingsFieldsSchema.superRefine((settings, ctx) => {
    for (const boxType of BOX_TYPES) {
      const field = DOSE_RATE_FIELD[boxType];
      // An empty rate or label maximum has its own message at its own field.
      if (!Number.isFinite(settings[field]) || !Number.isFinite(settings.labelMaximumGramsPerBroodBox)) continue;
      for (const problem of doseRateProblems(settings[field], settings.labelMaximumGramsPerBroodBox)) {
        if (problem.aboveLabel && settings.doseAboveLabelConfirmed) continue; // the owner confirmed it
        const message = problem.aboveLabel
          ? `${problem.message} To save it anyway, tick “My label allows this dose”.`
          : problem.message;
        ctx.addIssue({ code: "custom", message, path: [field] });
      }
    }
    // Only once both figures are valid on their own (their own messages come first).
    const wellFormed = Number.isInteger(settings.roundsWithBrood) && settings.roundsWithBrood >= 1 && Number.isFinite(settings.roundIntervalDays);
    const span = wellFormed ? plannedCourseSpanProblem(settings.roundsWithBrood, settings.roundIntervalDays) : null;
    // At both figures: either may be the one the owner changed.
    if (span) {
      ctx.addIssue({ code: "custom", message: span, path: ["roundsWithBrood"] });
      ctx.addIssue({ code: "custom", message: span, path: ["roundIntervalDays"] });
    }
    if (settings.maxApplicationsPerColonyPerSeason < settings.roundsWithBrood) {
      ctx.addIssue({
        code: "custom",
        message: `Allow at least ${settings.roundsWithBrood} applications per colony per season: a course with brood has ${settings.roundsWithBrood} rounds.`,
        path: ["maxApplicationsPerColonyPerSeason"],
      });
    }
    if (settings.airTempMinC >= settings.airTempMaxC) {
      ctx.addIssue({ code: "custom", message: "The highest air temperature must be above the lowest.", path: ["airTempMaxC"] });
      ctx.addIssue({ code: "custom", message: "The lowest air temperature must be below the highest.", path: ["airTempMinC"] });
    }
    for (const problem of checkVaporizerBand({ minC: settings.blockMinC, maxC: settings.blockMaxC })) {
      if (problem.severity !== "error") continue; // warnings are shown, never block saving
      ctx.addIssue({
        code: "custom",
        message: problem.message,
        path: [problem.field === "minC" ? "blockMinC" : "blockMaxC"],
      });
    }
    const uncovered = monthsWithoutThreshold(settings.miteThresholds);
    if (uncovered.length > 0) {
      ctx.addIssue({
        code: "custom",
        message: `No threshold covers ${uncovered.map((m) => MONTH_NAMES[m - 1]).join(", ")}.`,
        path: ["miteThresholds"],
      });
    }
    const doubled = monthsWithSeveralThresholds(settings.miteThresholds);
    if (doubled.length > 0) {
      ctx.addIssue({
        code: "custom",
        message: `More than one threshold covers ${doubled.map((m) => MONTH_NAMES[m - 1]).join(", ")}.`,
        path: ["miteThresholds"],
      });
    }
});

/** The business's operative settings. */
export type BusinessSettings = z.output<typeof businessSettingsSchema>;

/** The box types whose dose rate lies above the label maximum per brood box (compared in 0.01 g). */
export function doseRatesAboveLabel(settings: BusinessSettings): { boxType: (typeof BOX_TYPES)[number]; label: string; grams: number }[] {
  const limit = gramsToCentigrams(settings.labelMaximumGramsPerBroodBox);
  return BOX_TYPES.filter((t) => gramsToCentigrams(settings[DOSE_RATE_FIELD[t]]) > limit).map((t) => ({
    boxType: t,
    label: BOX_TYPE_LABELS[t],
    grams: roundDoseGrams(settings[DOSE_RATE_FIELD[t]]),
  }));
}

/** Every default setting. */
export const defaultBusinessSettings: BusinessSettings = businessSettingsSchema.parse({});

/**
 * Medium and nuc rates for a business that gave only the deep box's rate: the defaults' share
 * of it (a medium box takes what the default medium rate is of the default deep rate), so
 * they stay below any label maximum the deep rate keeps to. At least 0.01 g.
 */
export function boxRatesScaledFromDeep(deepGramsPerBox: number): { doseGramsPerMediumBox: number; doseGramsPerNucBox: number } {
  const d = defaultBusinessSettings;
  const share = (rate: number) => Math.max(0.01, roundDoseGrams((deepGramsPerBox * rate) / d.doseGramsPerBroodBox));
  return { doseGramsPerMediumBox: share(d.doseGramsPerMediumBox), doseGramsPerNucBox: share(d.doseGramsPerNucBox) };
}

/**
 * Why the owner's settings input cannot be saved without a registration number (null when it
 * has one): setup and the settings page ask for it, though stored settings may lack it.
 */
export function registrationNumberProblem(input: { productRegistrationNumber?: unknown }): string | null {
  const value = input.productRegistrationNumber;
  return typeof value === "string" && value.trim() !== "" ? null : "Enter the registration number as on the product's label; application records print it.";
}

/** What application records and reports print for a registration number not entered yet. */
export function registrationNumberShown(value: string): string {
  return value.trim() === "" ? "not entered yet (owner: add it in Settings)" : value;
}

/** Field-by-field messages from a failed validation (first path segment → messages). */
export type BusinessSettingsFieldErrors = Partial<Record<keyof BusinessSettings, string[]>>;

/** Validates settings input; on failure returns the messages per field for the settings form. */
export function validateBusinessSettings(
  input: unknown,
): { ok: true; settings: BusinessSettings } | { ok: false; fieldErrors: BusinessSettingsFieldErrors; formErrors: string[] } {
  const result = businessSettingsSchema.safeParse(input);
  if (result.success) return { ok: true, settings: result.data };
  const fieldErrors: BusinessSettingsFieldErrors = {};
  const formErrors: string[] = [];
  for (const issue of result.error.issues) {
    const field = issue.path[0];
    if (typeof field === "string") {
      const key = field as keyof BusinessSettings;
      (fieldErrors[key] ??= []).push(issue.message);
    } else {
      formErrors.push(issue.message);
    }
  }
  return { ok: false, fieldErrors, formErrors };
}

/** What the settings page shows beside a field. */
export interface SettingsFieldInfo {
  label: string;
  /** The unit the value is stored in ("" when it has none). */
  unit: string;
  /** One line on what the figure does. */
  explanation: string;
  /** Where the default comes from (see sources.md), when it has an outside source. */
  source?: string;
}

/** A label, unit, explanation and source for every setting. */
export const settingsFieldInfo: Record<keyof BusinessSettings, SettingsFieldInfo> = {
  unitSystem: {
    label: "Units",
    unit: "",
    explanation: "Show masses, temperatures and distances in metric or US units; doses always show grams, as labels do.",
  },
  doseGramsPerBroodBox: {
    label: "Dose per deep brood box",
    unit: "g",
    explanation: "Grams of oxalic acid dihydrate vaporized per deep brood box; a colony's dose is its brood boxes times their type's rate.",
    source:
      "US label (EPA Reg. No. 73291-2): 1 g per brood chamber, as cited in Tellarini Prieto et al. 2024, Front. Bee Sci., doi:10.3389/frbee.2024.1442030",
  },
  doseGramsPerMediumBox: {
    label: "Dose per medium brood box",
    unit: "g",
    explanation: "Grams per medium (shallower) brood box. A medium holds about two thirds of a deep's volume.",
    source: "Common practice: rates per box scaled by the box's volume; Langstroth box depths of 9⅝ in (deep) and 6⅝ in (medium), from memory",
  },
  doseGramsPerNucBox: {
    label: "Dose per nuc box",
    unit: "g",
    explanation: "Grams per small single box of a nucleus colony (about five frames).",
    source: "Common practice: about half a ten-frame deep's dose for a five-frame nuc",
  },
  labelMaximumGramsPerBroodBox: {
    label: "Label maximum per brood box",
    unit: "g",
    explanation:
      "The most your product label allows per brood box. A dose rate above it is saved only when you tick that your label allows it, and every crew screen then says so.",
    source:
      "US label before 2025: 1 g per brood chamber; the amended label (2025-06-24, as reported) allows up to 4 g — check the label on your package",
  },
  productName: {
    label: "Product name",
    unit: "",
    explanation: "The product as named on its label; printed on application records.",
  },
  productRegistrationNumber: {
    label: "Registration number",
    unit: "",
    explanation: "The product's registration number as on its label; printed on application records.",
    source: "US EPA registration of oxalic acid dihydrate beehive products: EPA Reg. No. 73291-2",
  },
  roundsWithBrood: {
    label: "Rounds with brood",
    unit: "rounds",
    explanation:
      "Treatment rounds planned for a yard with brood or unknown brood; a broodless yard gets one, as the vapor does not reach mites under cappings.",
    source:
      "Common practice: 3 rounds 5–7 days apart; Berry et al. 2022, J. Insect Sci., PMC8825467 (7 rounds at 5-day spacing harmed neither bees nor brood); EU summary of product characteristics (UK VMD, 2015) on broodless colonies",
  },
  doseAboveLabelConfirmed: {
    label: "My label allows this dose",
    unit: "",
    explanation: "Tick only when a dose rate above the label maximum you entered is what your product's label allows; the label is the law.",
  },
  vaporizerLoadGrams: {
    label: "Vaporizer load",
    unit: "g",
    explanation: "The most acid your vaporizer takes in one load; a colony's dose above it is given in several loads, and the time at the yard grows with them.",
    source: "Common practice: small pan vaporizers take about 1–2 g a load; check your own",
  },
  maxApplicationsPerColonyPerSeason: {
    label: "Applications per colony per season",
    unit: "applications",
    explanation:
      "The most treated tallies one colony may get in a calendar year; the crew screen refuses one more. It must allow a whole course with brood.",
    source: "Common practice: a course of 3 rounds with brood and one broodless round in winter; follow your label's limit where it gives one",
  },
  airTempMinC: {
    label: "Lowest air temperature",
    unit: "°C",
    explanation: "The crew records the air temperature at each yard; below this the crew screen warns before treating.",
    source: "Common practice, from memory: about 4 °C (40 °F), when the bees cluster tightly",
  },
  airTempMaxC: {
    label: "Highest air temperature",
    unit: "°C",
    explanation: "Above this the crew screen warns before treating: in hot weather the bees beard outside and the entrance cannot stay closed long.",
    source: "Common practice, from memory: about 30 °C (86 °F)",
  },
  recordRetentionYears: {
    label: "Keep application records",
    unit: "years",
    explanation:
      "When a customer deletes their account, their name and the place of each treatment stay on the application records this long after the last treatment, then are removed.",
    source: "US restricted-use pesticide records are kept at least 2 years (US EPA certification rule, as summarised by pesticidestewardship.org); your state may ask for longer",
  },
  roundIntervalDays: {
    label: "Days between rounds",
    unit: "days",
    explanation: "Calendar days from one round to the next in a course with brood.",
    source: "Common practice: 5–7 days apart",
  },
  miteThresholds: {
    label: "Seasonal action thresholds",
    unit: "mites per 100 bees",
    explanation:
      "The mite load at or above which a colony needs treating, by months of the year; every month must be covered exactly once.",
    source:
      "Early season 1 per 100 (Mississippi State Univ. Extension); autumn 2–3 per 100 (Honey Bee Health Coalition, Tools for Varroa Management); general 3 per 100 (USDA-ARS Carl Hayden Bee Research Center)",
  },
  beesPer100Ml: {
    label: "Bees per 100 mL of sample",
    unit: "bees",
    explanation: "Turns a sample's volume into bees sampled when the crew does not count them.",
    source:
      "About 300 bees per 100 mL (COLOSS BEEBOOK Vol. II, Dietemann et al. 2013); half-cup rules of 300 or 400 bees differ between guides",
  },
  sublimationSeconds: {
    label: "Sublimation time",
    unit: "s",
    explanation: "Seconds one dose takes to vaporize on the block.",
    source: "Common practice: roughly 30–40 s at a block temperature of about 230–240 °C",
  },
  entranceClosedMinutes: {
    label: "Entrance closed after dose",
    unit: "min",
    explanation:
      "Minutes an entrance stays closed after its dose; the crew waits this once after the last hive of a yard.",
    source: "Common practice: about 10 minutes",
  },
  moveBetweenHivesMinutes: {
    label: "Move between hives",
    unit: "min",
    explanation:
      "Minutes from one hive's dose done to the next hive ready: walking, loading the dose, closing and reopening entrances.",
  },
  blockReheatSeconds: {
    label: "Block reheat time",
    unit: "s",
    explanation:
      "Seconds your vaporizer needs to get back to working temperature after a dose; a crew cannot dose faster than this.",
  },
  setupMinutes: {
    label: "Set-up per yard",
    unit: "min",
    explanation: "Minutes at each yard for parking, unloading, suiting up and greeting, before the first hive.",
  },
  vaporizersPerCrew: {
    label: "Vaporizers per crew",
    unit: "vaporizers",
    explanation: "Vaporizers a crew works with at once; hives are dosed side by side.",
  },
  typicalColoniesPerYard: {
    label: "Typical colonies per yard",
    unit: "colonies",
    explanation: "Used to estimate how many colonies a crew-day can take before the route is planned: a day is filled with yards of this size.",
  },
  averageDriveMinutesBetweenYards: {
    label: "Average drive between yards",
    unit: "min",
    explanation: "Used with the typical yard to estimate a crew-day's room for bookings; the route planner uses real drive times.",
  },
  blockMinC: {
    label: "Lowest block temperature",
    unit: "°C",
    explanation: "The vaporizer block must be at least this hot before a dose; it must lie above the acid's sublimation point.",
    source:
      "Common practice: about 230–240 °C; anhydrous oxalic acid sublimes from about 157 °C and the dihydrate melts at 101.5 °C (chemical handbooks)",
  },
  blockMaxC: {
    label: "Highest block temperature",
    unit: "°C",
    explanation: "The block should not run hotter than this; above the band more acid decomposes instead of vaporizing.",
    source: "Common practice: about 230–240 °C; anhydrous oxalic acid decomposes from about 189.5 °C (chemical data sheets)",
  },
  circuityFactor: {
    label: "Road circuity factor",
    unit: "×",
    explanation: "Road distance divided by straight-line distance, used when no routing engine is configured.",
    source:
      "About 1.2 in the USA (Ballou et al. 2002, Transp. Res. A 36:843–848); 1.3 ± 0.1 on motorway networks (arXiv:2406.06490)",
  },
  averageSpeedKmh: {
    label: "Average driving speed",
    unit: "km/h",
    explanation: "Average speed over a whole drive, stops and junctions included, used for estimated drive times.",
    source: "About 37 mph (≈ 60 km/h) on rural trips (Pew Research Center analysis, 2018)",
  },
  businessName: {
    label: "Business name",
    unit: "",
    explanation: "As printed on invoices, receipts, reports and application records. Left empty: the sender name of outgoing e-mail.",
  },
  businessAddress: {
    label: "Business address",
    unit: "",
    explanation: "Postal address printed under the name on invoices, receipts and reports.",
  },
  businessPhone: {
    label: "Business phone",
    unit: "",
    explanation: "The number customers call about a visit once they can no longer change it in the portal.",
  },
  contactEmail: {
    label: "Contact e-mail",
    unit: "",
    explanation: "The address customers write to about a visit once they can no longer change it in the portal.",
  },
  customerChangeCutoffHours: {
    label: "Customer changes close",
    unit: "hours",
    explanation:
      "Customers may move or cancel a visit in the portal until this many hours before its day begins in the business time zone; after that they call or write.",
  },
  timeZone: {
    label: "Business time zone",
    unit: "",
    explanation: "Service days and times are shown in this time zone.",
  },
  pricePerColonyCents: {
    label: "Price per colony",
    unit: "cents",
    explanation: "Charged for each colony treated, counted from the crew's tally.",
  },
  tripFeeCents: {
    label: "Trip fee per yard",
    unit: "cents",
    explanation: "Charged once per yard visit, on top of the colonies.",
  },
  minimumPerVisitCents: {
    label: "Minimum per visit",
    unit: "cents",
    explanation: "A visit is never invoiced for less than this before tax.",
  },
  taxRateBasisPoints: {
    label: "Tax rate",
    unit: "basis points",
    explanation: "Sales tax on services in hundredths of a percent (800 = 8 %); enter your own rate, or 0 if your services are not taxed.",
    source: "From memory: New York State 4 % plus Tompkins County 4 %; check your own jurisdiction",
  },
  paymentTermsDays: {
    label: "Payment terms",
    unit: "days",
    explanation: "Days from the invoice date to its due date.",
  },
  overdueReminderDays: {
    label: "Overdue reminder",
    unit: "days",
    explanation: "Days after the due date before an unpaid invoice gets a reminder.",
  },
};
