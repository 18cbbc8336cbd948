import type { Knex } from "knex";
import { businessSettingsSchema, defaultBusinessSettings, type BusinessSettings } from "~/domain/settings";

const KEY = "business";

/** The business's settings: what the owner saved, with defaults for anything not saved. */
export async function loadBusinessSettings(db: Knex): Promise<BusinessSettings> {
  const row = await db("settings").where({ key: KEY }).first("value");
  if (!row) return defaultBusinessSettings;
  const parsed = businessSettingsSchema.safeParse(row.value);
  // A stored value that no longer validates (a rule tightened since) falls back field by field.
  return parsed.success ? parsed.data : businessSettingsSchema.parse({ ...defaultBusinessSettings, ...pickValid(row.value) });
}

function pickValid(value: unknown): Partial<BusinessSettings> {
  if (!value || typeof value !== "object") return {};
  const shape = businessSettingsSchema.shape as unknown as Record<string, { safeParse(v: unknown): { success: boolean } }>;
  return Object.fromEntries(
    Object.entries(value).filter(([key, v]) => key in shape && shape[key].safeParse(v).success),
  ) as Partial<BusinessSettings>;
}
