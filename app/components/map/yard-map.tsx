import { lazy, Suspense, useId, useSyncExternalStore, type ReactNode } from "react";

// What route modules import. Leaflet touches `window` at import, so the map itself lives in
// yard-map.client.tsx and loads only in the browser after hydration; until then (and on the
// server) a placeholder of the same size holds its place. The marker shapes and the legend
// are plain SVG and render anywhere, so lists and legends can show the same pins.

export type MarkerTone = "booked" | "requested" | "in-course" | "never" | "selected" | "stop";
export type LatLng = { lat: number; lng: number };

export type YardMapMarker = {
  id: string | number;
  lat: number;
  lng: number;
  /** The accessible name of the pin (its tooltip on hover) and the heading of its popup. */
  title: string;
  tone: MarkerTone;
  /** For "stop" pins: the stop's number, drawn inside the cell. */
  number?: number;
  /** The popup's title becomes a link here. */
  href?: string;
  /** One line of text under the title in the popup. */
  popup?: string;
};

export type YardMapRoute = { id: string; colour: string; points: [number, number][] };

export type YardMapPicker = { value: LatLng | null; onChange(value: LatLng): void };

export type YardMapProps = {
  markers: YardMapMarker[];
  routes?: YardMapRoute[];
  /** Picker mode: a click drops the pin, the pin is draggable. */
  picker?: YardMapPicker;
  /** CSS height of the map, e.g. "24rem" or "clamp(20rem, 55vh, 36rem)". */
  height?: string;
  /** "content" (default): fit the markers, routes and pin with padding; "default": Ithaca, NY at zoom 9. */
  fitTo?: "content" | "default";
  /** A tile URL template (from MAP_TILE_URL); without it the offline base map is drawn. */
  tileUrl?: string | null;
  tileAttribution?: string | null;
  /** Drawn over the map's lower left corner on wider screens, under the map on phones. */
  legend?: ReactNode;
  /** The accessible name of the map, e.g. "Map of 12 yards". */
  label?: string;
  /** Said after the name, e.g. where the same yards are listed as text. */
  description?: string;
  className?: string;
};

export const DEFAULT_CENTRE: [number, number] = [42.44, -76.5]; // Ithaca, NY
export const DEFAULT_ZOOM = 9;
export const PAPER = "#f6f4ee";

export const MARKER_TONES: Record<MarkerTone, { fill: string; ink: string; glyph: "check" | "wait" | "part" | "ring" | "dot" | "number" }> = {
  booked: { fill: "#175a43", ink: "#ffffff", glyph: "check" },
  // Blue, the one hue the other pins do not use (white on it 6.4:1), with an hourglass.
  requested: { fill: "#2f5ea8", ink: "#ffffff", glyph: "wait" },
  "in-course": { fill: "#c7801a", ink: "#17201c", glyph: "part" },
  never: { fill: "#5b6660", ink: "#ffffff", glyph: "ring" },
  selected: { fill: "#a3241a", ink: "#ffffff", glyph: "dot" },
  stop: { fill: "#0b3024", ink: "#ffffff", glyph: "number" },
};

/** Pixel size of a pin (width, height) and where its tip is. */
export function markerSize(tone: MarkerTone): { width: number; height: number; tipY: number } {
  const scale = tone === "selected" ? 1.25 : tone === "stop" ? 1.1 : 1;
  const width = Math.round(28 * scale);
  const height = Math.round(35 * scale);
  return { width, height, tipY: Math.round((height * 38.6) / 40) };
}

// A hexagon cell (pointy top) whose lower corner runs out into the pin's point.
const PIN_PATH = "M16 1.6 27.7 8.3v13.4L19.4 26.5 16 38.6l-3.4-12.1-8.3-4.8V8.3Z";

function glyphSvg(tone: MarkerTone, number?: number): string {
  const { ink, glyph } = MARKER_TONES[tone];
  switch (glyph) {
    case "check":
      return `<path d="M10.6 15.3l3.6 3.6 7.2-7.6" fill="none" stroke="${ink}" stroke-width="3" stroke-linecap="round" stroke-linejoin="round"/>`;
    case "wait":
      // An hourglass: waiting for the office to confirm.
      return `<path d="M11.4 9.6h9.2L16 15l4.6 5.4h-9.2L16 15Z" fill="${ink}" stroke="${ink}" stroke-width="1" stroke-linejoin="round"/>`;
    case "part":
      // A disc half filled: a course part done.
      return `<circle cx="16" cy="15" r="5.6" fill="none" stroke="${ink}" stroke-width="2.2"/><path d="M16 9.4a5.6 5.6 0 0 0 0 11.2Z" fill="${ink}"/>`;
    case "ring":
      return `<circle cx="16" cy="15" r="4.6" fill="none" stroke="${ink}" stroke-width="2.6"/>`;
    case "dot":
      return `<circle cx="16" cy="15" r="5.2" fill="${ink}"/>`;
    case "number": {
      const text = number == null ? "" : String(number);
      const size = text.length > 2 ? 9.5 : text.length > 1 ? 12 : 14;
      return `<text x="16" y="15.2" text-anchor="middle" dominant-baseline="central" font-family="Work Sans, ui-sans-serif, system-ui, sans-serif" font-weight="700" font-size="${size}" fill="${ink}">${text}</text>`;
    }
  }
}

/** The SVG of a Varroute pin, as markup (for Leaflet divIcons and for swatches). */
export function markerSvg(tone: MarkerTone, number?: number, pixelHeight?: number): string {
  const size = markerSize(tone);
  const height = pixelHeight ?? size.height;
  const width = Math.round((height * size.width) / size.height);
  const { fill } = MARKER_TONES[tone];
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 32 40" width="${width}" height="${height}" aria-hidden="true" focusable="false" ` +
    `style="display:block;overflow:visible;filter:drop-shadow(0 1px 1.5px rgba(23,32,28,.5))">` +
    `<path d="${PIN_PATH}" fill="${fill}" stroke="#ffffff" stroke-width="2" stroke-linejoin="round"/>` +
    glyphSvg(tone, number) +
    `</svg>`
  );
}

/** A pin drawn inline (legends, lists), the same shape as on the map. */
export function MarkerSwatch({ tone, number, height = 24, className = "" }: { tone: MarkerTone; number?: number; height?: number; className?: string }) {
  return <span aria-hidden="true" className={`inline-block shrink-0 ${className}`} dangerouslySetInnerHTML={{ __html: markerSvg(tone, number, height) }} />;
}

/** A compact key to the pins, for the map's `legend` slot. */
export function MapLegend({ items, title }: { items: { tone: MarkerTone; label: string; count?: number }[]; title?: string }) {
  return (
    <div className="w-fit rounded-lg border border-line bg-card/95 px-3 py-2 text-sm text-ink shadow-md">
      {title ? <p className="mb-1 font-bold">{title}</p> : null}
      <ul className="flex flex-wrap gap-x-4 gap-y-1 sm:flex-col">
        {items.map((item) => (
          <li key={item.tone} className="flex items-center gap-2">
            <MarkerSwatch tone={item.tone} height={22} />
            <span>
              {item.label}
              {item.count != null ? <span className="ml-1 font-semibold tabular-nums">({item.count})</span> : null}
            </span>
          </li>
        ))}
      </ul>
    </div>
  );
}

const YardMapClient = lazy(() => import("./yard-map.client"));

const subscribeNever = () => () => {};

function MapPlaceholder() {
  return (
    <div className="flex h-full w-full items-center justify-center text-ink-soft" style={{ background: PAPER }}>
      <p className="text-sm">
        Loading the map…
        <noscript> The map needs JavaScript.</noscript>
      </p>
    </div>
  );
}

/** Varroute's map: placeholder on the server and until hydrated, then the Leaflet map. */
export function YardMap(props: YardMapProps) {
  const { height = "24rem", legend, label, description, className = "" } = props;
  const hydrated = useSyncExternalStore(
    subscribeNever,
    () => true,
    () => false,
  );
  const descriptionId = useId();
  const name = label ?? (props.picker ? "Map for placing the pin" : `Map of ${props.markers.length} ${props.markers.length === 1 ? "place" : "places"}`);
  return (
    <figure aria-label={name} aria-describedby={description ? descriptionId : undefined} className={`relative isolate m-0 ${className}`}>
      {description ? (
        <p id={descriptionId} className="sr-only">
          {description}
        </p>
      ) : null}
      <div className="relative" style={{ height }}>
        <div className="absolute inset-0 isolate overflow-hidden rounded-xl border border-line">
          {hydrated ? (
            <Suspense fallback={<MapPlaceholder />}>
              <YardMapClient {...props} />
            </Suspense>
          ) : (
            <MapPlaceholder />
          )}
        </div>
        {/* Over the map's lower left corner on wider screens (Leaflet's credit line is on the right)… */}
        {legend ? <div className="absolute bottom-3 left-3 z-10 hidden sm:block">{legend}</div> : null}
      </div>
      {/* …and under the map on phones, where it would hide too much of it. */}
      {legend ? <div className="mt-2 sm:hidden">{legend}</div> : null}
    </figure>
  );
}
