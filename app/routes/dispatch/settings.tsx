import { useEffect, useState } from "react";
import { data, Form, useNavigation } from "react-router";
import { SettingField } from "~/components/settings-field";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { formValues } from "~/forms/field-errors";
import { settingsFormDefaults } from "~/forms/settings-form";
import { doseRatesAboveLabel, settingsFieldInfo, type BusinessSettings } from "~/domain/settings";
import { checkVaporizerBand } from "~/domain/chemistry";
import { celsiusToFahrenheit, kilometresToMiles, roundTo } from "~/domain/units";
import { loadBusinessSettings, settingsRuleProblems, updateBusinessSettingsFromForm } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import type { Route } from "./+types/settings";

export const meta: Route.MetaFunction = () => [{ title: "Settings · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const settings = await loadBusinessSettings(db);
  return {
    settings,
    values: settingsFormDefaults(settings),
    ruleProblems: settingsRuleProblems(settings),
    canEdit: user.role === "owner",
    saved: new URL(request.url).searchParams.has("saved"),
  };
}

export async function action({ request }: Route.ActionArgs) {
  // Staff of the area first, then the body (400 when it is not a form), then only the owner
  // may change settings (403).
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const form = await readForm(request);
  if (user.role !== "owner") throw data("Only the owner can change the settings.", { status: 403 });
  const values = formValues(form);
  const result = await updateBusinessSettingsFromForm(db, values, user.id);
  if (!result.ok) return data({ errors: result.errors, values: values as Record<string, string> }, { status: 400 });
  return { errors: null, values: settingsFormDefaults(result.settings) };
}

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

function usHint(settings: BusinessSettings, key: string, value: string): string | undefined {
  if (settings.unitSystem !== "us") return undefined;
  const n = Number(value);
  if (!Number.isFinite(n)) return undefined;
  if (key === "blockMinC" || key === "blockMaxC" || key === "airTempMinC" || key === "airTempMaxC") return `(${roundTo(celsiusToFahrenheit(n), 0)} °F)`;
  if (key === "averageSpeedKmh") return `(${roundTo(kilometresToMiles(n), 1)} mph)`;
  return undefined;
}

type Section = { title: string; fields: (keyof BusinessSettings | "taxRatePercent")[] };
const SECTIONS: Section[] = [
  { title: "Business", fields: ["businessName", "businessAddress", "businessPhone", "contactEmail"] },
  { title: "Customer bookings", fields: ["customerChangeCutoffHours"] },
  { title: "Units and time", fields: ["unitSystem", "timeZone"] },
  { title: "Product and dose", fields: ["productName", "productRegistrationNumber", "labelMaximumGramsPerBroodBox", "doseGramsPerBroodBox", "doseGramsPerMediumBox", "doseGramsPerNucBox", "doseAboveLabelConfirmed", "vaporizerLoadGrams"] },
  { title: "Treatment course", fields: ["roundsWithBrood", "roundIntervalDays", "maxApplicationsPerColonyPerSeason", "airTempMinC", "airTempMaxC"] },
  { title: "Records", fields: ["recordRetentionYears"] },
  { title: "Mite monitoring", fields: ["beesPer100Ml"] },
  { title: "Vaporizer and time at a yard", fields: ["blockMinC", "blockMaxC", "sublimationSeconds", "blockReheatSeconds", "moveBetweenHivesMinutes", "entranceClosedMinutes", "setupMinutes", "vaporizersPerCrew"] },
  { title: "Driving estimate", fields: ["circuityFactor", "averageSpeedKmh"] },
  { title: "Prices and invoices", fields: ["pricePerColonyCents", "tripFeeCents", "minimumPerVisitCents", "taxRatePercent", "paymentTermsDays", "overdueReminderDays"] },
];

export default function Settings({ loaderData, actionData }: Route.ComponentProps) {
  const { settings, canEdit } = loaderData;
  const busy = useNavigation().state === "submitting";
  const values = actionData?.values ?? loaderData.values;
  const errors = actionData?.errors ?? loaderData.ruleProblems ?? {};
  const readOnly = !canEdit;
  const bandWarnings = checkVaporizerBand({ minC: settings.blockMinC, maxC: settings.blockMaxC }).filter((p) => p.severity === "warning");
  const aboveLabel = doseRatesAboveLabel(settings);
  // The label confirmation is given anew at each save: a new answer from the server remounts it unticked.
  const [answers, setAnswers] = useState(0);
  useEffect(() => {
    if (actionData) setAnswers((n) => n + 1);
  }, [actionData]);
  const thresholdRows = Object.keys(values).filter((k) => /^miteThresholds\.\d+\.fromMonth$/.test(k)).length;

  function field(key: Section["fields"][number]) {
    if (key === "taxRatePercent") {
      return (
        <SettingField
          key={key}
          name="taxRatePercent"
          info={{ ...settingsFieldInfo.taxRateBasisPoints, explanation: "Sales tax on services; enter your own rate, or 0 if your services are not taxed." }}
          unit="%"
          defaultValue={values.taxRatePercent ?? ""}
          error={errors.taxRatePercent}
          readOnly={readOnly}
        />
      );
    }
    const info = settingsFieldInfo[key];
    if (key === "unitSystem") {
      return (
        <SettingField key={key} name={key} info={info} kind="select" defaultValue={values[key] ?? ""} error={errors[key]} readOnly={readOnly}
          options={[{ value: "metric", label: "Metric (g, °C, km)" }, { value: "us", label: "US (oz, °F, miles)" }]} />
      );
    }
    if (key === "doseAboveLabelConfirmed") {
      if (readOnly) return null;
      return <SettingField key={`${key}-${answers}`} name={key} info={info} kind="checkbox" defaultValue="" error={errors[key]} readOnly={readOnly} />;
    }
    const isText = key === "productName" || key === "productRegistrationNumber" || key === "timeZone" || key === "businessName" || key === "businessAddress" || key === "businessPhone" || key === "contactEmail";
    const isMoney = key === "pricePerColonyCents" || key === "tripFeeCents" || key === "minimumPerVisitCents";
    return (
      <SettingField
        key={key}
        name={key}
        info={info}
        kind={isText ? "text" : "number"}
        unit={isMoney ? "$" : undefined}
        step={isMoney ? "0.01" : "any"}
        defaultValue={values[key] ?? ""}
        error={errors[key]}
        readOnly={readOnly}
        extra={usHint(settings, key, values[key] ?? "")}
      />
    );
  }

  return (
    <>
      <PageHeader
        title="Settings"
        subtitle={canEdit ? "The figures Varroute computes with. Take doses and limits from the label of the product you use." : "Only the owner can change these settings."}
      />
      <div className="grid gap-6 lg:grid-cols-3">
        <Form method="post" noValidate className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          {actionData?.errors ? <FormMessage message="Nothing was saved. Correct the fields marked below." /> : null}
          {!actionData && loaderData.ruleProblems ? (
            <FormMessage message="These settings were saved before a rule they now break. Until the fields marked below are corrected and saved, Varroute keeps using them as saved." />
          ) : null}
          {actionData && !actionData.errors ? <FormMessage tone="info" message="Settings saved." /> : null}
          {SECTIONS.map((section) => (
            <Card key={section.title} title={section.title}>
              {section.fields.map(field)}
              {section.title === "Product and dose" && aboveLabel.length ? (
                <p className="mt-2 rounded-lg border-2 border-ochre-700 bg-card p-3 font-semibold text-ochre-700" role="note">
                  Above the label maximum of {settings.labelMaximumGramsPerBroodBox} g per brood box:{" "}
                  {aboveLabel.map((r) => `${r.label.toLowerCase()} boxes ${r.grams} g`).join(", ")}.{" "}
                  {settings.doseAboveLabelConfirmed
                    ? "Saved with the owner's confirmation that the label allows it; crews see this on every stop."
                    : "Saved before the owner's confirmation was asked for: correct the rate, or confirm that your label allows it, and save. Crews see this on every stop."}
                </p>
              ) : null}
              {section.title === "Vaporizer and time at a yard" && bandWarnings.length ? (
                <ul className="mt-2 list-disc pl-5 text-sm text-ochre-700">
                  {bandWarnings.map((w) => (
                    <li key={w.message}>{w.message}</li>
                  ))}
                </ul>
              ) : null}
              {section.title === "Mite monitoring" ? (
                <fieldset className="mt-3">
                  <legend className="font-semibold">{settingsFieldInfo.miteThresholds.label} (mites per 100 bees)</legend>
                  <p className="text-sm text-ink-soft">{settingsFieldInfo.miteThresholds.explanation}</p>
                  <p className="text-sm text-ink-soft italic">Source: {settingsFieldInfo.miteThresholds.source}</p>
                  {errors.miteThresholds ? <p className="mt-1 font-semibold text-alarm-700" role="alert">{errors.miteThresholds}</p> : null}
                  <div className="mt-2 flex flex-col gap-2">
                    {Array.from({ length: Math.max(thresholdRows, 1) + (readOnly ? 0 : 1) }, (_, i) => (
                      <div key={i} className="flex flex-wrap items-end gap-2">
                        {(["fromMonth", "toMonth"] as const).map((part) => (
                          <label key={part} className="flex flex-col text-sm font-semibold">
                            {part === "fromMonth" ? "From" : "To"}
                            <select name={`miteThresholds.${i}.${part}`} defaultValue={values[`miteThresholds.${i}.${part}`] ?? ""} disabled={readOnly}
                              className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base disabled:bg-paper">
                              <option value="">—</option>
                              {MONTHS.map((m, idx) => (
                                <option key={m} value={idx + 1}>{m}</option>
                              ))}
                            </select>
                          </label>
                        ))}
                        <label className="flex flex-col text-sm font-semibold">
                          Threshold
                          <input name={`miteThresholds.${i}.mitesPer100`} type="number" step="0.1" inputMode="decimal" defaultValue={values[`miteThresholds.${i}.mitesPer100`] ?? ""} disabled={readOnly}
                            className="min-h-11 w-28 rounded-lg border-2 border-line bg-card px-2 text-base disabled:bg-paper" />
                        </label>
                        {["fromMonth", "toMonth", "mitesPer100"].map((part) =>
                          errors[`miteThresholds.${i}.${part}`] ? (
                            <p key={part} className="w-full text-sm font-semibold text-alarm-700">Row {i + 1}: {errors[`miteThresholds.${i}.${part}`]}</p>
                          ) : null,
                        )}
                      </div>
                    ))}
                  </div>
                  {!readOnly ? <p className="mt-1 text-sm text-ink-soft">Fill the empty row to add a season; clear a row to remove it.</p> : null}
                </fieldset>
              ) : null}
            </Card>
          ))}
          {canEdit ? (
            <div className="sticky bottom-0 -mx-1 flex justify-end bg-paper/95 px-1 py-3">
              <Button type="submit" disabled={busy}>{busy ? "Saving…" : "Save settings"}</Button>
            </div>
          ) : null}
        </Form>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
