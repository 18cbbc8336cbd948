import type { Knex } from "knex";
import { boxRatesScaledFromDeep, businessSettingsFieldsSchema, businessSettingsSchema, defaultBusinessSettings, registrationNumberProblem, type BusinessSettings } from "~/domain/settings";
import { fieldErrors, type FieldErrors } from "~/forms/field-errors";
import { settingsInputFromForm } from "~/forms/settings-form";
import { recordsKeptUntilFor } from "./account-data.server";

const KEY = "business";

/** The business's settings: what the owner saved, with defaults for anything not saved. */
export async function loadBusinessSettings(db: Knex): Promise<BusinessSettings> {
  const row = await db("settings").where({ key: KEY }).first("value");
  if (!row) return defaultBusinessSettings;
  const parsed = businessSettingsSchema.safeParse(row.value);
  if (parsed.success) return parsed.data;
  // Saved before a rule was tightened or a field added: each field that is still valid on its
  // own is kept, the others take their defaults, and the rules between fields are not applied
  // (they are for saving: the settings page shows what to correct at the next save). Box rates
  // that were never saved are scaled from the deep rate, as setup does, so a business whose
  // label allows less than the default medium rate is not dosed above it.
  const kept = pickValid(row.value);
  const deep = kept.doseGramsPerBroodBox ?? defaultBusinessSettings.doseGramsPerBroodBox;
  const scaled = boxRatesScaledFromDeep(deep);
  return businessSettingsFieldsSchema.parse({
    ...defaultBusinessSettings,
    doseGramsPerMediumBox: kept.doseGramsPerMediumBox ?? scaled.doseGramsPerMediumBox,
    doseGramsPerNucBox: kept.doseGramsPerNucBox ?? scaled.doseGramsPerNucBox,
    ...kept,
  });
}

/**
 * The rules between settings that loaded settings break (saved before the rule existed), by
 * field, or null: the settings page marks them so the owner corrects them at the next save.
 */
export function settingsRuleProblems(settings: BusinessSettings): FieldErrors | null {
  const checked = businessSettingsSchema.safeParse(settings);
  return checked.success ? null : fieldErrors(checked.error);
}

function pickValid(value: unknown): Partial<BusinessSettings> {
  if (!value || typeof value !== "object") return {};
  const shape = businessSettingsFieldsSchema.shape as unknown as Record<string, { safeParse(v: unknown): { success: boolean } }>;
  return Object.fromEntries(
    Object.entries(value).filter(([key, v]) => key in shape && shape[key].safeParse(v).success),
  ) as Partial<BusinessSettings>;
}

/**
 * Saves validated settings and records who changed what, in one transaction. A longer record
 * retention also lengthens the record holds of deleted customers (extendRecordHolds).
 */
export async function saveBusinessSettings(db: Knex, settings: BusinessSettings, actorUserId: number | string) {
  await db.transaction(async (trx) => {
    const previous = await trx("settings").where({ key: KEY }).forUpdate().first("value");
    // What the records were kept under until now (the defaults when nothing was saved yet).
    const previousYears = (previous ? pickValid(previous.value).recordRetentionYears : undefined) ?? defaultBusinessSettings.recordRetentionYears;
    await trx("settings")
      .insert({ key: KEY, value: JSON.stringify(settings), updated_by: Number(actorUserId) })
      .onConflict("key")
      .merge({ value: JSON.stringify(settings), updated_by: Number(actorUserId), updated_at: trx.fn.now() });
    await trx("audit_log").insert({
      actor_user_id: Number(actorUserId),
      action: "settings.update",
      entity_type: "settings",
      entity_id: KEY,
      before: previous ? JSON.stringify(previous.value) : null,
      after: JSON.stringify(settings),
    });
    if (settings.recordRetentionYears > previousYears) await extendRecordHolds(trx, settings.recordRetentionYears, Number(actorUserId));
  });
}

/**
 * The record retention was raised: every deleted customer whose application-record fields
 * are still held (records_kept_until set, not anonymised yet) is held until the day the new
 * retention gives (recordsKeptUntilFor), when that is later, with a "customer.records_hold_extended"
 * audit row each. Holds are never shortened: records kept under a longer rule stay kept, so a
 * lower retention applies only to accounts deleted after it. Under the customers' row locks,
 * as the worker's sweep takes them, so a hold the sweep is ending is either extended first or
 * found gone.
 */
async function extendRecordHolds(trx: Knex.Transaction, retentionYears: number, actorUserId: number): Promise<void> {
  const held = await trx("customers").whereNotNull("records_kept_until").orderBy("id").forUpdate().select("id", "records_kept_until");
  for (const customer of held) {
    const keptUntil = customer.records_kept_until!;
    const longer = await recordsKeptUntilFor(trx, Number(customer.id), retentionYears);
    if (longer === null || longer <= keptUntil) continue;
    await trx("customers").where({ id: customer.id }).update({ records_kept_until: longer, updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: actorUserId,
      action: "customer.records_hold_extended",
      entity_type: "customer",
      entity_id: String(customer.id),
      before: JSON.stringify({ keptUntil }),
      after: JSON.stringify({ keptUntil: longer, recordRetentionYears: retentionYears }),
    });
  }
}

/** Validates the posted settings form and saves it; on any invalid field nothing is saved
 *  and the messages come back keyed by the form's field names. */
export async function updateBusinessSettingsFromForm(
  db: Knex,
  values: Record<string, string | string[]>,
  actorUserId: number | string,
): Promise<{ ok: true; settings: BusinessSettings } | { ok: false; errors: FieldErrors }> {
  const input = settingsInputFromForm(values);
  const parsed = businessSettingsSchema.safeParse(input);
  const missingRegistration = registrationNumberProblem(input);
  if (!parsed.success || missingRegistration) {
    const errors = parsed.success ? {} : fieldErrors(parsed.error);
    // The form shows the tax rate in percent under its own name.
    if (errors.taxRateBasisPoints) errors.taxRatePercent = "Enter a tax rate from 0 to 30 %.";
    if (missingRegistration) errors.productRegistrationNumber ??= missingRegistration;
    return { ok: false, errors };
  }
  await saveBusinessSettings(db, parsed.data, actorUserId);
  return { ok: true, settings: parsed.data };
}

/**
 * Who the business is on paper: the name and address lines printed on invoices, receipts and
 * reports. The name falls back to the sender name of MAIL_FROM when settings leave it empty.
 */
export function businessIdentity(settings: Pick<BusinessSettings, "businessName" | "businessAddress">, fallbackName: string): { name: string; addressLines: string[] } {
  return {
    name: settings.businessName.trim() || fallbackName,
    addressLines: settings.businessAddress.trim() ? [settings.businessAddress.trim()] : [],
  };
}
