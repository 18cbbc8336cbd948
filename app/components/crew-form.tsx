import { useId } from "react";
import { Form, useNavigation } from "react-router";
import { WEEKDAY_CHOICES, type CrewFormValues } from "~/forms/crew";
import type { FieldErrors } from "~/forms/field-errors";
import { LocationPicker, PICKER_HINT } from "./map/location-picker";
import { Button } from "./ui/button";
import { Card } from "./ui/card";
import { Field, FormMessage } from "./ui/field";

export type CrewMemberChoice = { userId: number; name: string; email: string; disabled: boolean; otherActiveCrew: string | null };

/**
 * A crew's start or end point: its name, then the yard form's map picker with this form's
 * field names (`${prefix}Label`, `${prefix}Lat`, `${prefix}Lng`).
 */
function CrewPointPicker({
  prefix,
  legend,
  values,
  errors,
  map,
  optional = false,
}: {
  prefix: "start" | "end";
  legend: string;
  values: { label?: string; lat?: string; lng?: string };
  errors: FieldErrors;
  map: { tileUrl: string | null; attribution: string | null };
  optional?: boolean;
}) {
  const word = prefix === "start" ? "Start" : "End";
  return (
    <LocationPicker
      defaultValue={{ lat: values.lat, lng: values.lng }}
      errors={{ lat: errors[`${prefix}Lat`], lng: errors[`${prefix}Lng`] }}
      names={{ lat: `${prefix}Lat`, lng: `${prefix}Lng` }}
      labels={{ lat: `${word} latitude`, lng: `${word} longitude` }}
      legend={legend}
      legendClassName="mb-1 text-lg font-bold"
      hint={`${optional ? "Leave empty if the crew ends the day where it starts. " : ""}${PICKER_HINT}`}
      pointName={`${prefix} point`}
      height="clamp(14rem, 35vh, 20rem)"
      tileUrl={map.tileUrl}
      tileAttribution={map.attribution}
      required={!optional}
      clearLabel={optional ? "Clear the end point" : undefined}
    >
      <Field label={`${word} point name`} name={`${prefix}Label`} defaultValue={values.label} error={errors[`${prefix}Label`]} required={!optional} />
    </LocationPicker>
  );
}

/** Add or edit a crew: members, start and end points, hours, weekdays, kit and daily limits. */
export function CrewForm({
  values,
  errors,
  members,
  submitLabel,
  map,
  doseGramsPerBroodBox,
}: {
  values: CrewFormValues;
  errors: FieldErrors;
  members: CrewMemberChoice[];
  submitLabel: string;
  map: { tileUrl: string | null; attribution: string | null };
  doseGramsPerBroodBox: number;
}) {
  const busy = useNavigation().state === "submitting";
  const chosen = new Set(values.memberIds ?? []);
  const days = new Set(values.workingWeekdays ?? []);
  const ids = useId();
  const fieldError = (name: string) =>
    errors[name] ? (
      <p id={`${ids}-${name}-error`} className="mt-1 text-sm font-semibold text-alarm-700">
        {errors[name]}
      </p>
    ) : null;
  return (
    <Form method="post" noValidate className="flex flex-col gap-6">
      {Object.keys(errors).length ? <FormMessage message={errors.form ?? "Nothing was saved. Correct the fields marked below."} /> : null}
      <Card title="The crew">
        <div className="flex flex-col gap-4">
          <Field label="Crew name" name="name" defaultValue={values.name} error={errors.name} required maxLength={60} />
          <fieldset aria-describedby={errors.memberIds ? `${ids}-memberIds-error` : `${ids}-members-hint`}>
            <legend className="font-semibold">Members</legend>
            <p id={`${ids}-members-hint`} className="text-sm text-ink-soft">
              People with a crew account. A person can be on one active crew only; each member gets the crew's runs by e-mail.
            </p>
            {members.length === 0 ? <p className="mt-2 text-ink-soft">No crew accounts yet.</p> : null}
            <div className="mt-2 grid gap-2 sm:grid-cols-2">
              {members.map((m) => (
                <label key={m.userId} className="flex min-h-11 items-start gap-3 rounded-lg border-2 border-line bg-card px-3 py-2">
                  <input type="checkbox" name="memberIds" value={String(m.userId)} defaultChecked={chosen.has(String(m.userId))} className="mt-1 h-5 w-5 accent-pine-700" />
                  <span>
                    <span className="block font-semibold">{m.name}</span>
                    <span className="block text-sm text-ink-soft">
                      {m.email}
                      {m.otherActiveCrew ? ` · on ${m.otherActiveCrew}` : ""}
                      {m.disabled ? " · account disabled" : ""}
                    </span>
                  </span>
                </label>
              ))}
            </div>
            {fieldError("memberIds")}
          </fieldset>
          <label className="flex min-h-11 items-start gap-3 rounded-lg border-2 border-line bg-card px-3 py-2">
            <input type="checkbox" name="active" defaultChecked={values.active === "on" || values.active === "true"} className="mt-1 h-6 w-6 accent-pine-700" aria-describedby={errors.active ? `${ids}-active-error` : undefined} />
            <span>
              <span className="block font-semibold">Active</span>
              <span className="block text-sm text-ink-soft">An inactive crew takes no bookings and gets no runs.</span>
            </span>
          </label>
          {fieldError("active")}
        </div>
      </Card>
      <Card title="Where the day starts and ends">
        <div className="flex flex-col gap-6">
          <CrewPointPicker prefix="start" legend="Start point" values={{ label: values.startLabel, lat: values.startLat, lng: values.startLng }} errors={errors} map={map} />
          <CrewPointPicker prefix="end" legend="End point (optional)" values={{ label: values.endLabel, lat: values.endLat, lng: values.endLng }} errors={errors} map={map} optional />
        </div>
      </Card>
      <Card title="Working days">
        <div className="flex flex-col gap-4">
          <div className="grid gap-4 sm:grid-cols-3">
            <Field label="Working day starts" name="workStart" type="time" step={300} defaultValue={values.workStart} error={errors.workStart} required />
            <Field label="Working day ends" name="workEnd" type="time" step={300} defaultValue={values.workEnd} error={errors.workEnd} required />
            <Field label="Vaporizers carried" name="vaporizers" type="number" inputMode="numeric" min={1} max={10} step={1} defaultValue={values.vaporizers} error={errors.vaporizers} required />
          </div>
          <fieldset aria-describedby={errors.workingWeekdays ? `${ids}-workingWeekdays-error` : undefined}>
            <legend className="font-semibold">Weekdays the crew works</legend>
            <div className="mt-2 flex flex-wrap gap-2">
              {WEEKDAY_CHOICES.map((d) => (
                <label key={d.value} className="flex min-h-11 items-center gap-2 rounded-lg border-2 border-line bg-card px-3">
                  <input type="checkbox" name="workingWeekdays" value={d.value} defaultChecked={days.has(d.value)} className="h-5 w-5 accent-pine-700" />
                  <span className="font-semibold">{d.name}</span>
                </label>
              ))}
            </div>
            {fieldError("workingWeekdays")}
          </fieldset>
        </div>
      </Card>
      <Card title="Daily limits (optional)">
        <p className="mb-3 text-sm text-ink-soft">
          The booking calendar never counts more than these for the crew, and the day planner never gives it more; leave a box empty for no limit. At {doseGramsPerBroodBox} g per brood box
          (settings), a colony with one brood box takes {doseGramsPerBroodBox} g.
        </p>
        <div className="grid gap-4 sm:grid-cols-2">
          <Field label="Most colonies a day" name="maxColoniesPerDay" type="number" inputMode="numeric" min={1} max={1000} step={1} defaultValue={values.maxColoniesPerDay} error={errors.maxColoniesPerDay} />
          <Field
            label="Most grams of oxalic acid a day"
            name="maxDoseGramsPerDay"
            type="number"
            inputMode="decimal"
            min={0.01}
            step={0.01}
            defaultValue={values.maxDoseGramsPerDay}
            error={errors.maxDoseGramsPerDay}
            hint="Oxalic acid dihydrate, e.g. what the crew carries; follow the product label."
          />
        </div>
      </Card>
      <div>
        <Button type="submit" disabled={busy}>
          {busy ? "Saving…" : submitLabel}
        </Button>
      </div>
    </Form>
  );
}
