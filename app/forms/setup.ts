import { z } from "zod";
import { boxRatesScaledFromDeep, businessSettingsSchema, defaultBusinessSettings, registrationNumberProblem, type BusinessSettings } from "~/domain/settings";
import { newPasswordSchema } from "./account";
import { fieldErrors, type FieldErrors } from "./field-errors";
import { settingsFormDefaults, settingsInputFromForm } from "./settings-form";

// The setup page of a new business (/setup): who the business is, the owner's account, the
// depot the first crew starts from, the product, the dose and the prices. Shared by the
// browser (instant messages) and the server. The settings fields carry the settings page's
// names and formats (money in dollars, tax in percent) and are checked by the settings
// schema itself, so setup can never save what the settings page would refuse.

/** The settings the setup page asks for; every other setting starts at its default. */
export const SETUP_SETTINGS_FIELDS = [
  "businessName",
  "businessAddress",
  "timeZone",
  "productName",
  "productRegistrationNumber",
  "labelMaximumGramsPerBroodBox",
  "doseGramsPerBroodBox",
  "pricePerColonyCents",
  "tripFeeCents",
  "minimumPerVisitCents",
  "taxRatePercent",
] as const;

/** The name of the crew setup makes at the depot. */
export const FIRST_CREW_NAME = "Crew 1";

/** The search parameter /dispatch is opened with after setup (its welcome notice). */
export const SETUP_WELCOME_PARAM = "welcome";

/** A coordinate typed or dropped on the map (NaN when empty, so the number check words the message). */
function coordinate(label: string, limit: number, range: string) {
  return z.preprocess(
    (v) => (typeof v === "string" && v.trim() !== "" ? Number(v.trim()) : Number.NaN),
    z
      .number({ error: `Place the depot on the map, or type its ${label}.` })
      .min(-limit, `${range}.`)
      .max(limit, `${range}.`),
  );
}

const requiredText = (max: number, empty: string, long: string) => z.string({ error: empty }).trim().min(1, empty).max(max, long);

/** The fields that are not settings: the business's name and address (required here), the owner, the depot. */
export const setupAccountSchema = z
  .object({
    businessName: requiredText(120, "Enter the business name, as it goes on invoices.", "The business name must be at most 120 characters."),
    businessAddress: requiredText(300, "Enter the business's postal address, as it goes on invoices.", "The business address must be at most 300 characters."),
    ownerName: z.string({ error: "Enter your name." }).trim().min(2, "Enter your name.").max(120, "Keep the name under 120 characters."),
    email: z
      .string({ error: "Enter your e-mail address." })
      .trim()
      .toLowerCase()
      .min(1, "Enter your e-mail address.")
      .max(254, "Keep the e-mail address under 254 characters.")
      .email("Enter a valid e-mail address."),
    password: z.string({ error: "Choose a password." }).pipe(newPasswordSchema),
    confirm: z.string({ error: "Enter the password again." }),
    depotLabel: requiredText(120, "Name the depot, e.g. “Shop, 12 Kiln Lane”.", "Keep the depot's name under 120 characters."),
    lat: coordinate("latitude", 90, "Latitude is between −90 and 90"),
    lng: coordinate("longitude", 180, "Longitude is between −180 and 180"),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

export type SetupInput = {
  owner: { name: string; email: string; password: string };
  depot: { label: string; lat: number; lng: number };
  settings: BusinessSettings;
};

const one = (value: string | string[] | undefined) => (Array.isArray(value) ? value[0] : value);

/**
 * The settings the form sets, over the defaults. A field the form did not send counts as
 * empty, never as its default: the product and its registration number must be the owner's.
 */
function settingsInput(values: Record<string, string | string[]>): Record<string, unknown> {
  const picked = Object.fromEntries(SETUP_SETTINGS_FIELDS.map((name) => [name, one(values[name]) ?? ""]));
  const { miteThresholds: _none, ...converted } = settingsInputFromForm(picked);
  // The form asks for the deep box's rate only; medium and nuc boxes keep their default share
  // of it, so they never pass the label maximum the deep rate keeps to.
  const deep = converted.doseGramsPerBroodBox;
  const scaled = typeof deep === "number" && Number.isFinite(deep) && deep > 0 ? boxRatesScaledFromDeep(deep) : {};
  return { ...defaultBusinessSettings, ...converted, ...scaled };
}

/** The posted setup form, checked: the input to save, or a message per field. */
export function parseSetupForm(values: Record<string, string | string[]>): { ok: true; input: SetupInput } | { ok: false; errors: FieldErrors } {
  const account = setupAccountSchema.safeParse(Object.fromEntries(Object.entries(values).map(([k, v]) => [k, one(v)])));
  const input = settingsInput(values);
  const settings = businessSettingsSchema.safeParse(input);
  const missingRegistration = registrationNumberProblem(input);
  if (account.success && settings.success && !missingRegistration) {
    const a = account.data;
    return {
      ok: true,
      input: {
        owner: { name: a.ownerName, email: a.email, password: a.password },
        depot: { label: a.depotLabel, lat: a.lat, lng: a.lng },
        settings: { ...settings.data, businessName: a.businessName, businessAddress: a.businessAddress },
      },
    };
  }
  const errors: FieldErrors = account.success ? {} : fieldErrors(account.error);
  if (!settings.success) {
    const settingErrors = fieldErrors(settings.error);
    // The form shows the tax rate in percent under its own name.
    if (settingErrors.taxRateBasisPoints) settingErrors.taxRatePercent = "Enter a tax rate from 0 to 30 %, or 0 if your services are not taxed.";
    delete settingErrors.taxRateBasisPoints;
    // Set-up has no confirmation box for a dose above the label: the deep rate must keep to it
    // here. The medium and nuc rates it scales from the deep rate are not on the form, so
    // their errors (only ever the deep rate's, scaled) are left to the deep rate's message.
    if (settingErrors.doseGramsPerBroodBox) {
      settingErrors.doseGramsPerBroodBox = settingErrors.doseGramsPerBroodBox.replace(
        / To save it anyway, tick “My label allows this dose”\.$/,
        " Keep to the label here; a higher rate your label allows can be confirmed in Settings afterwards.",
      );
    }
    delete settingErrors.doseGramsPerMediumBox;
    delete settingErrors.doseGramsPerNucBox;
    for (const [field, message] of Object.entries(settingErrors)) errors[field] ??= message;
  }
  if (missingRegistration) errors.productRegistrationNumber ??= missingRegistration;
  return { ok: false, errors };
}

/**
 * The form's first values: the dose and price defaults as the settings page shows them.
 * The product, its registration number and the tax rate start empty: they come from the
 * label in the owner's hands and the owner's own jurisdiction, never from an example.
 */
export function setupFormDefaults(): Record<string, string> {
  const shown = settingsFormDefaults(defaultBusinessSettings);
  return {
    labelMaximumGramsPerBroodBox: shown.labelMaximumGramsPerBroodBox,
    doseGramsPerBroodBox: shown.doseGramsPerBroodBox,
    pricePerColonyCents: shown.pricePerColonyCents,
    tripFeeCents: shown.tripFeeCents,
    minimumPerVisitCents: shown.minimumPerVisitCents,
    productName: "",
    productRegistrationNumber: "",
    taxRatePercent: "",
  };
}

/** What the form sent, to show back after an error (never the passwords). */
export function setupFormValuesFrom(values: Record<string, string | string[]>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [key, value] of Object.entries(values)) {
    if (key === "password" || key === "confirm") continue;
    const text = one(value);
    if (text !== undefined) out[key] = text;
  }
  return out;
}
