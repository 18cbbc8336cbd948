import { useCallback, useId, useMemo, useState, type ReactNode } from "react";
import { Button } from "../ui/button";
import { YardMap, type LatLng, type YardMapMarker } from "./yard-map";

/** How to use the picker, shown above the map and given to it as its description. */
export const PICKER_HINT = "Click the map to drop the pin, drag it to adjust, or type the coordinates.";

function parseCoordinate(text: string, limit: number): number | null {
  if (text.trim() === "") return null;
  const n = Number(text);
  return Number.isFinite(n) && Math.abs(n) <= limit ? n : null;
}

const asText = (n: number) => String(Math.round(n * 1e6) / 1e6);

/** A saved point, or the coordinates as the user typed them (kept as sent when a form comes back with errors). */
const initialText = (v: number | string | undefined) => (typeof v === "number" ? asText(v) : (v ?? ""));

/** A place on the map: the map in picker mode and the latitude and longitude inputs (form
 *  fields `lat` and `lng` unless `names` says otherwise), kept in sync both ways. Keyboard
 *  users type the numbers. Used for yards, the depot and crews' start and end points. */
export function LocationPicker({
  defaultValue = null,
  errors,
  tileUrl,
  tileAttribution,
  markers = [],
  height = "clamp(16rem, 45vh, 24rem)",
  legend = "Yard location",
  legendClassName = "mb-1 font-semibold",
  names = { lat: "lat", lng: "lng" },
  labels = { lat: "Latitude", lng: "Longitude" },
  hint = PICKER_HINT,
  pointName = "pin",
  clearLabel,
  required = true,
  onChange,
  children,
}: {
  /** The pin to start from (the saved location, or what the user sent last, as typed). */
  defaultValue?: LatLng | { lat?: string; lng?: string } | null;
  errors?: { lat?: string; lng?: string };
  tileUrl?: string | null;
  tileAttribution?: string | null;
  /** Other places to show for reference (e.g. the customer's other yards). */
  markers?: YardMapMarker[];
  height?: string;
  legend?: string;
  legendClassName?: string;
  /** The form field names of the two inputs. */
  names?: { lat: string; lng: string };
  labels?: { lat: string; lng: string };
  hint?: string;
  /** What the map's accessible name calls the point: "Map with the <pointName> at …". */
  pointName?: string;
  /** When given, a button with this text empties both coordinates (for an optional point). */
  clearLabel?: string;
  required?: boolean;
  onChange?: (value: LatLng | null) => void;
  /** Fields shown between the legend and the hint, e.g. the point's name. */
  children?: ReactNode;
}) {
  const id = useId();
  const [latText, setLatText] = useState(initialText(defaultValue?.lat));
  const [lngText, setLngText] = useState(initialText(defaultValue?.lng));

  const value = useMemo(() => {
    const lat = parseCoordinate(latText, 90);
    const lng = parseCoordinate(lngText, 180);
    return lat == null || lng == null ? null : { lat, lng };
  }, [latText, lngText]);

  const fromMap = useCallback(
    (next: LatLng) => {
      setLatText(asText(next.lat));
      setLngText(asText(next.lng));
      onChange?.(next);
    },
    [onChange],
  );
  const picker = useMemo(() => ({ value, onChange: fromMap }), [value, fromMap]);

  const typed = (which: "lat" | "lng", text: string) => {
    const nextLat = which === "lat" ? text : latText;
    const nextLng = which === "lng" ? text : lngText;
    (which === "lat" ? setLatText : setLngText)(text);
    const lat = parseCoordinate(nextLat, 90);
    const lng = parseCoordinate(nextLng, 180);
    onChange?.(lat == null || lng == null ? null : { lat, lng });
  };

  const field = (which: "lat" | "lng", text: string, limit: number) => {
    const inputId = `${id}-${which}`;
    const error = errors?.[which];
    return (
      <div className="flex flex-col gap-1">
        <label htmlFor={inputId} className="font-semibold">
          {labels[which]}
        </label>
        <input
          id={inputId}
          name={names[which]}
          type="number"
          inputMode="decimal"
          step="0.000001"
          min={-limit}
          max={limit}
          required={required}
          value={text}
          onChange={(event) => typed(which, event.currentTarget.value)}
          aria-invalid={error ? true : undefined}
          aria-describedby={[`${id}-hint`, error ? `${inputId}-error` : null].filter(Boolean).join(" ")}
          className={`min-h-11 rounded-lg border-2 bg-card px-3 text-base tabular-nums ${error ? "border-alarm-700" : "border-line focus:border-pine-600"}`}
        />
        {error ? (
          <p id={`${inputId}-error`} className="text-sm font-semibold text-alarm-700">
            {error}
          </p>
        ) : null}
      </div>
    );
  };

  return (
    <fieldset className="flex min-w-0 flex-col gap-3">
      <legend className={legendClassName}>{legend}</legend>
      {children}
      <p id={`${id}-hint`} className="text-sm text-ink-soft">
        {hint}
      </p>
      <YardMap
        markers={markers}
        picker={picker}
        height={height}
        tileUrl={tileUrl}
        tileAttribution={tileAttribution}
        label={value ? `Map with the ${pointName} at ${value.lat}, ${value.lng}` : `Map with no ${pointName} yet`}
        description={hint}
      />
      <div className="grid gap-3 sm:grid-cols-2">
        {field("lat", latText, 90)}
        {field("lng", lngText, 180)}
      </div>
      {clearLabel && (latText !== "" || lngText !== "") ? (
        <div>
          <Button
            variant="quiet"
            onClick={() => {
              setLatText("");
              setLngText("");
              onChange?.(null);
            }}
          >
            {clearLabel}
          </Button>
        </div>
      ) : null}
    </fieldset>
  );
}
