import { useCallback, useId, useMemo, useState } from "react";
import { YardMap, type LatLng, type YardMapMarker } from "./yard-map";

const HINT = "Click the map to drop the pin, drag it to adjust, or type the coordinates.";

function parseCoordinate(text: string, limit: number): number | null {
  if (text.trim() === "") return null;
  const n = Number(text);
  return Number.isFinite(n) && Math.abs(n) <= limit ? n : null;
}

const asText = (n: number) => String(Math.round(n * 1e6) / 1e6);

/** A yard's location: the map in picker mode and the "Latitude" and "Longitude" inputs
 *  (form fields `lat` and `lng`), kept in sync both ways. Keyboard users type the numbers. */
export function LocationPicker({
  defaultValue = null,
  errors,
  tileUrl,
  tileAttribution,
  markers = [],
  height = "clamp(16rem, 45vh, 24rem)",
  legend = "Yard location",
  required = true,
  onChange,
}: {
  /** The pin to start from (the yard's saved location, or what the user sent last). */
  defaultValue?: LatLng | null;
  errors?: { lat?: string; lng?: string };
  tileUrl?: string | null;
  tileAttribution?: string | null;
  /** Other places to show for reference (e.g. the customer's other yards). */
  markers?: YardMapMarker[];
  height?: string;
  legend?: string;
  required?: boolean;
  onChange?: (value: LatLng | null) => void;
}) {
  const id = useId();
  const [latText, setLatText] = useState(defaultValue ? asText(defaultValue.lat) : "");
  const [lngText, setLngText] = useState(defaultValue ? asText(defaultValue.lng) : "");

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

  const field = (which: "lat" | "lng", label: string, text: string, limit: number) => {
    const inputId = `${id}-${which}`;
    const error = errors?.[which];
    return (
      <div className="flex flex-col gap-1">
        <label htmlFor={inputId} className="font-semibold">
          {label}
        </label>
        <input
          id={inputId}
          name={which}
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
      <legend className="mb-1 font-semibold">{legend}</legend>
      <p id={`${id}-hint`} className="text-sm text-ink-soft">
        {HINT}
      </p>
      <YardMap
        markers={markers}
        picker={picker}
        height={height}
        tileUrl={tileUrl}
        tileAttribution={tileAttribution}
        label={value ? `Map with the pin at ${value.lat}, ${value.lng}` : "Map with no pin yet"}
        description={HINT}
      />
      <div className="grid gap-3 sm:grid-cols-2">
        {field("lat", "Latitude", latText, 90)}
        {field("lng", "Longitude", lngText, 180)}
      </div>
    </fieldset>
  );
}
