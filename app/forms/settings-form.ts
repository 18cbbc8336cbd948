import type { BusinessSettings } from "~/domain/settings";

// The settings form shows money in dollars and the tax rate in percent; the settings
// store cents and basis points. These convert both ways; everything else is a number
// or text posted under its own name. An empty number field becomes NaN so the schema
// answers "Enter … as a number" at that field.

export const MONEY_FIELDS = ["pricePerColonyCents", "tripFeeCents", "minimumPerVisitCents"] as const;
export const TEXT_FIELDS = ["businessName", "businessAddress", "businessPhone", "contactEmail", "unitSystem", "productName", "productRegistrationNumber", "timeZone"] as const;

/** Checkboxes: present when ticked. */
export const CHECKBOX_FIELDS = ["doseAboveLabelConfirmed"] as const;

function toNumber(value: unknown): number {
  if (typeof value !== "string" || value.trim() === "") return Number.NaN;
  return Number(value.trim().replace(/,/g, ""));
}

function toCents(value: unknown): number {
  const dollars = toNumber(typeof value === "string" ? value.replace(/^\$/, "") : value);
  return Number.isFinite(dollars) ? Math.round(dollars * 100) : dollars;
}

/** The posted form (string values) as the settings schema's input. */
export function settingsInputFromForm(values: Record<string, string | string[]>): Record<string, unknown> {
  const input: Record<string, unknown> = {};
  const thresholds = new Map<number, Record<string, number>>();
  for (const [name, raw] of Object.entries(values)) {
    const value = Array.isArray(raw) ? raw[0] : raw;
    const threshold = /^miteThresholds\.(\d+)\.(fromMonth|toMonth|mitesPer100)$/.exec(name);
    if (threshold) {
      const row = thresholds.get(Number(threshold[1])) ?? {};
      row[threshold[2]] = toNumber(value);
      thresholds.set(Number(threshold[1]), row);
    } else if ((TEXT_FIELDS as readonly string[]).includes(name)) input[name] = value;
    else if ((CHECKBOX_FIELDS as readonly string[]).includes(name)) input[name] = value === "on" || value === "true";
    else if ((MONEY_FIELDS as readonly string[]).includes(name)) input[name] = toCents(value);
    else if (name === "taxRatePercent") input.taxRateBasisPoints = Math.round(toNumber(value) * 100);
    else if (!name.startsWith("_")) input[name] = toNumber(value);
  }
  for (const name of CHECKBOX_FIELDS) input[name] ??= false;
  input.miteThresholds = [...thresholds.entries()]
    .sort(([a], [b]) => a - b)
    .map(([, row]) => row)
    // A row left entirely empty is a row the owner removed.
    .filter((row) => Object.values(row).some((v) => Number.isFinite(v)));
  return input;
}

/** Settings as the form shows them (dollars, percent). */
export function settingsFormDefaults(settings: BusinessSettings): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [key, value] of Object.entries(settings)) {
    if (key === "miteThresholds") continue;
    // A confirmation is given anew at each save, never shown ticked.
    if ((CHECKBOX_FIELDS as readonly string[]).includes(key)) continue;
    if ((MONEY_FIELDS as readonly string[]).includes(key)) out[key] = ((value as number) / 100).toFixed(2);
    else if (key === "taxRateBasisPoints") out.taxRatePercent = String((value as number) / 100);
    else out[key] = String(value);
  }
  settings.miteThresholds.forEach((t, i) => {
    out[`miteThresholds.${i}.fromMonth`] = String(t.fromMonth);
    out[`miteThresholds.${i}.toMonth`] = String(t.toMonth);
    out[`miteThresholds.${i}.mitesPer100`] = String(t.mitesPer100);
  });
  return out;
}
