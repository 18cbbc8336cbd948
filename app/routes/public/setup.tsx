import { useEffect, useId, useRef, useState } from "react";
import { data, Form, useNavigation } from "react-router";
import { LocationPicker } from "~/components/map/location-picker";
import { SafetyCautions } from "~/components/safety-cautions";
import { SettingField } from "~/components/settings-field";
import { Button } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import { weekdaysLabel } from "~/domain/capacity";
import { defaultBusinessSettings, settingsFieldInfo } from "~/domain/settings";
import { NEW_CREW_VALUES } from "~/forms/crew";
import { formValues, type FieldErrors } from "~/forms/field-errors";
import { FIRST_CREW_NAME, parseSetupForm, SETUP_WELCOME_PARAM, setupFormDefaults, setupFormValuesFrom } from "~/forms/setup";
import { businessIsSetUp, completeSetup } from "~/models/setup.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { passwordProblem } from "~/services/password-rules.server";
import { readForm } from "~/services/request.server";
import { createUserSession } from "~/services/session.server";
import type { Route } from "./+types/setup";

// The first run of a business of its own (VARROUTE_DEMO=0 on an empty database): the root
// loader sends every page here until an owner account exists. Nobody is signed in yet, so the
// page is open to whoever comes first; it works once, and afterwards (or on any database that
// has an owner, such as the demo) it does not exist: 404.

export const meta: Route.MetaFunction = () => [{ title: "Set up your business · Varroute" }];

const NOT_FOUND = "There is nothing at this address.";

/** The IANA time zones this server knows, plus UTC (which the list leaves out). */
function timeZoneChoices(): string[] {
  return [...Intl.supportedValuesOf("timeZone"), "UTC"];
}

export async function loader() {
  if (await businessIsSetUp(db)) throw data(NOT_FOUND, { status: 404 });
  return { map: mapConfig(), timeZones: timeZoneChoices(), values: setupFormDefaults() };
}

export async function action({ request }: Route.ActionArgs) {
  if (await businessIsSetUp(db)) throw data(NOT_FOUND, { status: 404 });
  const fields = formValues(await readForm(request));
  const values = setupFormValuesFrom(fields);
  const parsed = parseSetupForm(fields);
  if (!parsed.ok) return data({ errors: parsed.errors, values }, { status: 400 });
  const { owner } = parsed.input;
  const weak = passwordProblem(owner.password, { email: owner.email, name: owner.name });
  if (weak) return data({ errors: { password: weak } as FieldErrors, values }, { status: 400 });
  const done = await completeSetup(db, parsed.input);
  switch (done.outcome) {
    case "set-up":
      return createUserSession(request, String(done.ownerId), `/dispatch?${SETUP_WELCOME_PARAM}=1`);
    case "already-set-up":
      throw data(NOT_FOUND, { status: 404 });
    case "email-taken":
      return data(
        { errors: { email: "This e-mail address already has an account (a customer's). Use another address for the owner account." } as FieldErrors, values },
        { status: 409 },
      );
  }
}

/** The business time zone: the server's list, set to the browser's zone once the page runs. */
function TimeZoneSelect({ zones, defaultValue, error }: { zones: string[]; defaultValue: string; error?: string }) {
  const id = useId();
  const select = useRef<HTMLSelectElement>(null);
  useEffect(() => {
    // After hydration, so the server's and the browser's first render agree.
    const el = select.current;
    const browserZone = Intl.DateTimeFormat().resolvedOptions().timeZone;
    if (el && el.value === "" && zones.includes(browserZone)) el.value = browserZone;
  }, [zones]);
  const info = settingsFieldInfo.timeZone;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-semibold">
        {info.label}
      </label>
      <p id={`${id}-hint`} className="text-sm text-ink-soft">
        {info.explanation} Your browser&rsquo;s zone is chosen for you; change it if the business works in another.
      </p>
      <select
        ref={select}
        id={id}
        name="timeZone"
        defaultValue={defaultValue}
        aria-invalid={error ? true : undefined}
        aria-describedby={[`${id}-hint`, error ? `${id}-error` : null].filter(Boolean).join(" ")}
        className={`min-h-11 w-full max-w-md rounded-lg border-2 bg-card px-3 text-base ${error ? "border-alarm-700" : "border-line focus:border-pine-600"}`}
      >
        <option value="">Choose a time zone</option>
        {zones.map((zone) => (
          <option key={zone} value={zone}>
            {zone.replace(/_/g, " ")}
          </option>
        ))}
      </select>
      {error ? (
        <p id={`${id}-error`} className="text-sm font-semibold text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** The first crew's working week, as the new-crew form starts it ("Mon–Fri, 08:00–17:00"). */
const FIRST_CREW_WEEK = `${weekdaysLabel((NEW_CREW_VALUES.workingWeekdays ?? []).map(Number))}, ${NEW_CREW_VALUES.workStart}–${NEW_CREW_VALUES.workEnd}`;

export default function Setup({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  const errors: FieldErrors = clientErrors ?? actionData?.errors ?? {};
  const values: Record<string, string> = { ...loaderData.values, ...(actionData?.values ?? {}) };
  const lat = Number(values.lat);
  const lng = Number(values.lng);
  const depot = values.lat && values.lng && Number.isFinite(lat) && Number.isFinite(lng) ? { lat, lng } : null;
  const setting = (name: keyof typeof settingsFieldInfo, extra: { unit?: string; step?: string; kind?: "text" | "number" } = {}) => (
    <SettingField
      name={name}
      // The registration number's source names a real product's number: on this page the
      // owner copies it from their own label instead.
      info={name === "productRegistrationNumber" ? { ...settingsFieldInfo[name], source: undefined } : settingsFieldInfo[name]}
      kind={extra.kind ?? "number"}
      unit={extra.unit}
      step={extra.step}
      defaultValue={values[name] ?? ""}
      error={errors[name]}
      readOnly={false}
    />
  );

  return (
    <div className="mx-auto max-w-5xl px-4 py-8">
      <h1 className="text-3xl font-bold">Set up your business</h1>
      <p className="mt-2 max-w-3xl text-ink-soft">
        This page appears once, on a new Varroute. It makes your owner account, names your business, places the depot your first crew starts from, and
        sets the product, the dose and your prices. Every figure can be changed later under Settings.
      </p>
      <Form
        method="post"
        noValidate
        className="mt-6 flex flex-col gap-6"
        onSubmit={(event) => {
          const checked = parseSetupForm(formValues(new FormData(event.currentTarget)));
          if (!checked.ok) {
            event.preventDefault();
            setClientErrors(checked.errors);
          } else setClientErrors(null);
        }}
      >
        {Object.keys(errors).length > 0 ? <FormMessage message={errors.form ?? "Nothing was saved. Correct the fields marked below."} /> : null}

        <Card title="Your business">
          <div className="flex flex-col gap-4">
            <Field label="Business name" name="businessName" autoComplete="organization" required defaultValue={values.businessName} error={errors.businessName} hint="As printed on invoices, receipts and application records." />
            <Field label="Business address" name="businessAddress" autoComplete="street-address" required defaultValue={values.businessAddress} error={errors.businessAddress} hint="The postal address under the name on invoices and reports." />
            <TimeZoneSelect zones={loaderData.timeZones} defaultValue={values.timeZone ?? ""} error={errors.timeZone} />
          </div>
        </Card>

        <Card title="Your owner account">
          <p className="mb-4 text-ink-soft">The owner can do everything: staff, settings, prices and the audit trail. You invite the rest of your team once you are in.</p>
          <div className="grid gap-4 sm:grid-cols-2">
            <Field label="Your name" name="ownerName" autoComplete="name" required defaultValue={values.ownerName} error={errors.ownerName} />
            <Field label="E-mail" name="email" type="email" autoComplete="username" required defaultValue={values.email} error={errors.email} />
            <Field
              label="Password"
              name="password"
              type="password"
              autoComplete="new-password"
              required
              error={errors.password}
              hint="At least 10 characters, not a common password, and not your name or e-mail. A few words that do not belong together work well."
            />
            <Field label="Password again" name="confirm" type="password" autoComplete="new-password" required error={errors.confirm} />
          </div>
        </Card>

        <Card title="Depot">
          <p className="mb-4 text-ink-soft">
            Where the crews load up, start and end their day. Varroute makes a first crew, {FIRST_CREW_NAME}, that starts and ends here and works {FIRST_CREW_WEEK};
            give it members, change its hours or add crews under Crews once you are in.
          </p>
          <div className="flex flex-col gap-4">
            <Field label="Depot name" name="depotLabel" required defaultValue={values.depotLabel} error={errors.depotLabel} hint="How runs name the start and end point, e.g. “Shop, 12 Kiln Lane”." />
            <LocationPicker defaultValue={depot} errors={{ lat: errors.lat, lng: errors.lng }} tileUrl={loaderData.map.tileUrl} tileAttribution={loaderData.map.attribution} legend="Depot location" />
          </div>
        </Card>

        <Card title="Product and dose">
          <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_20rem]">
            <div className="min-w-0">
              <p className="text-ink-soft">Copy these from the label of the product you use: they are printed on every application record.</p>
              {setting("productName", { kind: "text" })}
              {setting("productRegistrationNumber", { kind: "text" })}
              {setting("labelMaximumGramsPerBroodBox")}
              {setting("doseGramsPerBroodBox")}
              <p className="mt-2 text-ink-soft">
                Medium boxes get {Math.round((defaultBusinessSettings.doseGramsPerMediumBox / defaultBusinessSettings.doseGramsPerBroodBox) * 100)} % and nuc boxes{" "}
                {Math.round((defaultBusinessSettings.doseGramsPerNucBox / defaultBusinessSettings.doseGramsPerBroodBox) * 100)} % of the deep box&apos;s dose until you set their own rates under Settings.
              </p>
            </div>
            <SafetyCautions audience="staff" />
          </div>
        </Card>

        <Card title="Prices">
          {setting("pricePerColonyCents", { unit: "$", step: "0.01" })}
          {setting("tripFeeCents", { unit: "$", step: "0.01" })}
          {setting("minimumPerVisitCents", { unit: "$", step: "0.01" })}
          <SettingField
            name="taxRatePercent"
            info={{ ...settingsFieldInfo.taxRateBasisPoints, explanation: "Sales tax on services; enter your own rate, or 0 if your services are not taxed.", source: undefined }}
            unit="%"
            defaultValue={values.taxRatePercent ?? ""}
            error={errors.taxRatePercent}
            readOnly={false}
          />
        </Card>

        <div>
          <Button type="submit" disabled={busy}>
            {busy ? "Setting up…" : "Set up the business and sign in"}
          </Button>
        </div>
      </Form>
    </div>
  );
}
