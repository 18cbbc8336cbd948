import { Form, useNavigation } from "react-router";
import { BOX_TYPE_LABELS, BOX_TYPES, MAX_BROOD_BOXES, MIN_BROOD_BOXES } from "~/domain/box-types";
import type { FieldErrors } from "~/forms/field-errors";
import { LocationPicker } from "./map/location-picker";
import { Button } from "./ui/button";
import { Card } from "./ui/card";
import { Field, FormMessage } from "./ui/field";

export type YardFormValues = Partial<Record<"name" | "lat" | "lng" | "address" | "colonyCount" | "broodBoxesPerColony" | "boxType" | "broodStatus" | "supersOff" | "accessNotes", string>>;

/** The form's starting values for a saved yard (the customer's and the dispatcher's edit pages). */
export function yardFormValues(yard: {
  name: string;
  lat: number;
  lng: number;
  address: string | null;
  colonyCount: number;
  broodBoxesPerColony: number;
  boxType: string;
  broodStatus: string;
  supersOff: boolean;
  accessNotes: string;
}): YardFormValues {
  return {
    name: yard.name,
    lat: String(yard.lat),
    lng: String(yard.lng),
    address: yard.address ?? "",
    colonyCount: String(yard.colonyCount),
    broodBoxesPerColony: String(yard.broodBoxesPerColony),
    boxType: yard.boxType,
    broodStatus: yard.broodStatus,
    supersOff: yard.supersOff ? "on" : "",
    accessNotes: yard.accessNotes,
  };
}

const BROOD_CHOICES = [
  { value: "brood", label: "Brood present", hint: "Needs several rounds a week or so apart" },
  { value: "broodless", label: "Broodless", hint: "One round treats it" },
  { value: "unknown", label: "Not sure", hint: "Planned as brood present, to be safe" },
];

/** Add or edit a yard: where it is (map or coordinates), its colonies, and how to get in. */
export function YardForm({
  values,
  errors,
  submitLabel,
  map,
  crewFindings = null,
}: {
  values: YardFormValues;
  errors: FieldErrors;
  submitLabel: string;
  map: { tileUrl: string | null; attribution: string | null };
  /** What the crew found at the hives when it differs from the yard's figures (edit only). */
  crewFindings?: string | null;
}) {
  const busy = useNavigation().state === "submitting";
  const lat = Number(values.lat);
  const lng = Number(values.lng);
  const hasPoint = values.lat !== undefined && values.lat !== "" && Number.isFinite(lat) && Number.isFinite(lng);
  return (
    <Form method="post" noValidate className="flex flex-col gap-6">
      <input type="hidden" name="intent" value="save" />
      {Object.keys(errors).length ? <FormMessage message="Nothing was saved. Correct the fields marked below." /> : null}
      <Card title="Where the yard is">
        <div className="flex flex-col gap-4">
          <Field label="Yard name" name="name" defaultValue={values.name} error={errors.name} required />
          <LocationPicker
            defaultValue={hasPoint ? { lat, lng } : null}
            errors={{ lat: errors.lat, lng: errors.lng }}
            tileUrl={map.tileUrl}
            tileAttribution={map.attribution}
          />
          <Field label="Address or directions (optional)" name="address" defaultValue={values.address} error={errors.address} />
        </div>
      </Card>
      <Card title="Colonies">
        <div className="grid gap-4 sm:grid-cols-2">
          <Field label="Colonies (hives) to treat" name="colonyCount" type="number" inputMode="numeric" min={0} max={200} step={1} defaultValue={values.colonyCount} error={errors.colonyCount} required />
          <Field label="Brood boxes per colony" name="broodBoxesPerColony" type="number" inputMode="numeric" min={MIN_BROOD_BOXES} max={MAX_BROOD_BOXES} step={1} defaultValue={values.broodBoxesPerColony ?? "1"} error={errors.broodBoxesPerColony} hint="Honey supers do not count: the dose goes by brood boxes." required />
        </div>
        {crewFindings ? (
          <div className="mt-4 rounded-lg border-l-4 border-ochre-500 bg-ochre-100 px-3 py-2" data-testid="crew-findings">
            <p>{crewFindings}</p>
            <p className="mt-1 text-sm">
              Saving keeps each colony as the crew found it. Change the brood boxes or box type here only to set every colony to the new figures.
            </p>
          </div>
        ) : null}
        <fieldset className="mt-4" aria-describedby={`boxType-hint${errors.boxType ? " boxType-error" : ""}`}>
          <legend className="font-semibold">Brood box type</legend>
          <p id="boxType-hint" className="text-sm text-ink-soft">
            The dose per brood box goes by its size.
          </p>
          <div className="mt-2 grid gap-2 sm:grid-cols-3">
            {BOX_TYPES.map((type) => (
              <label key={type} className="flex min-h-11 items-center gap-3 rounded-lg border-2 border-line bg-card px-3 py-2">
                <input type="radio" name="boxType" value={type} defaultChecked={(values.boxType || "deep") === type} className="h-5 w-5 accent-pine-700" />
                <span className="font-semibold">{BOX_TYPE_LABELS[type]}</span>
              </label>
            ))}
          </div>
          {errors.boxType ? (
            <p id="boxType-error" className="mt-1 font-semibold text-alarm-700">
              {errors.boxType}
            </p>
          ) : null}
        </fieldset>
        <fieldset className="mt-4" aria-describedby={errors.broodStatus ? "brood-error" : undefined}>
          <legend className="font-semibold">Brood in the colonies</legend>
          <div className="mt-2 grid gap-2 sm:grid-cols-3">
            {BROOD_CHOICES.map((choice) => (
              <label key={choice.value} className="flex min-h-11 items-start gap-3 rounded-lg border-2 border-line bg-card px-3 py-2">
                <input type="radio" name="broodStatus" value={choice.value} defaultChecked={(values.broodStatus ?? "unknown") === choice.value} className="mt-1 h-5 w-5 accent-pine-700" />
                <span>
                  <span className="block font-semibold">{choice.label}</span>
                  <span className="block text-sm text-ink-soft">{choice.hint}</span>
                </span>
              </label>
            ))}
          </div>
          {errors.broodStatus ? (
            <p id="brood-error" className="mt-1 font-semibold text-alarm-700">
              {errors.broodStatus}
            </p>
          ) : null}
        </fieldset>
        <label className="mt-4 flex min-h-11 items-start gap-3 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-3 py-2">
          <input type="checkbox" name="supersOff" defaultChecked={values.supersOff === "on" || values.supersOff === "true"} className="mt-1 h-6 w-6 accent-pine-700" />
          <span>
            <span className="block font-semibold">Honey supers are off</span>
            <span className="block text-sm">Take off any super with honey you will eat before the visit; the crew will not treat a hive with supers on unless the label allows it.</span>
          </span>
        </label>
      </Card>
      <Card title="Getting in">
        <div className="flex flex-col gap-1">
          <label htmlFor="accessNotes" className="font-semibold">
            Access notes
          </label>
          <p id="accessNotes-hint" className="text-sm text-ink-soft">
            Gate codes, dogs, where to park, how far to carry the kit.
          </p>
          <textarea
            id="accessNotes"
            name="accessNotes"
            rows={4}
            maxLength={2000}
            defaultValue={values.accessNotes}
            aria-describedby={`accessNotes-hint${errors.accessNotes ? " accessNotes-error" : ""}`}
            className="rounded-lg border-2 border-line bg-card p-3"
          />
          {errors.accessNotes ? (
            <p id="accessNotes-error" className="font-semibold text-alarm-700">
              {errors.accessNotes}
            </p>
          ) : null}
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
