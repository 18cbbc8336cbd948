import L from "leaflet";
import { Fragment, useEffect, useMemo, useRef } from "react";
import { MapContainer, Marker, Polyline, Popup, TileLayer, useMap, useMapEvents } from "react-leaflet";
import { Link } from "react-router";
import type { FeatureCollection, Geometry } from "geojson";
import { DEFAULT_CENTRE, DEFAULT_ZOOM, PAPER, markerSize, markerSvg, type LatLng, type MarkerTone, type YardMapPicker, type YardMapProps } from "./yard-map";

// The Leaflet map itself: browser only (see yard-map.tsx). No Leaflet default icons (the
// bundler breaks their image paths): every pin is Varroute's own SVG divIcon.

const icons = new Map<string, L.DivIcon>();

function iconFor(tone: MarkerTone, number?: number): L.DivIcon {
  const key = `${tone}:${number ?? ""}`;
  let icon = icons.get(key);
  if (!icon) {
    const { width, height, tipY } = markerSize(tone);
    icon = L.divIcon({
      html: markerSvg(tone, number),
      className: `vr-marker vr-marker--${tone}`,
      iconSize: [width, height],
      iconAnchor: [width / 2, tipY],
      popupAnchor: [0, -tipY + 4],
      tooltipAnchor: [width / 2, -tipY / 2],
    });
    icons.set(key, icon);
  }
  return icon;
}

const roundCoordinate = (x: number) => Math.round(x * 1e6) / 1e6;
const roundLatLng = (latlng: L.LatLng): LatLng => {
  const wrapped = latlng.wrap();
  return { lat: roundCoordinate(wrapped.lat), lng: roundCoordinate(wrapped.lng) };
};

// ---- Offline base map -------------------------------------------------------------------

type BaseMapProps = { kind: "county" | "state" | "outline" | "state-label" | "county-label"; name?: string };
type BaseMapData = FeatureCollection<Geometry, BaseMapProps>;

const LABEL_PANE = "vr-labels";
const BASE_ATTRIBUTION = "Boundaries: US Census Bureau";
const LINE_STYLES: Record<string, L.PathOptions> = {
  county: { color: "#a39d8c", weight: 1, opacity: 1, dashArray: "5 4", className: "vr-county-line" },
  state: { color: "#3d4a44", weight: 2.5, opacity: 0.9, className: "vr-state-line" },
  outline: { color: "#3d4a44", weight: 2, opacity: 0.9, className: "vr-state-line vr-outline-line" },
};
const LABEL_CLASSES = "!m-0 !rounded-none !border-0 !bg-transparent !p-0 !shadow-none font-sans [text-shadow:0_0_3px_#f6f4ee,0_0_3px_#f6f4ee,0_0_2px_#f6f4ee] before:!hidden";
const STATE_LABEL = `${LABEL_CLASSES} vr-state-label !text-[13px] font-semibold tracking-[0.22em] uppercase !text-[#3d4a44]`;
const COUNTY_LABEL = `${LABEL_CLASSES} vr-county-label !text-[11.5px] font-medium italic !text-[#5b6660] [.vr-far_&]:!hidden`;

// One request per box for the page's lifetime; the response is also cached by the browser.
const baseMaps = new Map<string, Promise<BaseMapData>>();

function loadBaseMap(bbox: string): Promise<BaseMapData> {
  let request = baseMaps.get(bbox);
  if (!request) {
    request = fetch(`/api/base-map?bbox=${bbox}`, { headers: { Accept: "application/json" } }).then(async (response) => {
      if (!response.ok || !response.headers.get("Content-Type")?.includes("json")) throw new Error(`base map: ${response.status}`);
      return (await response.json()) as BaseMapData;
    });
    request.catch(() => baseMaps.delete(bbox));
    baseMaps.set(bbox, request);
  }
  return request;
}

/** The view padded by half its size on every side, snapped outwards to a quarter degree,
 *  so small pans reuse the same box (and the same cached response). */
function boxAround(view: L.LatLngBounds): { key: string; bounds: L.LatLngBounds } {
  const padded = view.pad(0.5);
  const q = (x: number, f: (n: number) => number) => f(x * 4) / 4;
  const west = Math.max(-180, q(padded.getWest(), Math.floor));
  const south = Math.max(-85, q(padded.getSouth(), Math.floor));
  const east = Math.min(180, q(padded.getEast(), Math.ceil));
  const north = Math.min(85, q(padded.getNorth(), Math.ceil));
  return { key: [west, south, east, north].join(","), bounds: L.latLngBounds([south, west], [north, east]) };
}

/** County lines (thin, dashed), state lines and the national outline (thicker), names. */
function OfflineBaseMap() {
  const map = useMap();
  useEffect(() => {
    let disposed = false;
    let layer: L.LayerGroup | null = null;
    let covered: L.LatLngBounds | null = null;
    let wanted = "";
    map.attributionControl?.addAttribution(BASE_ATTRIBUTION);

    const markZoom = () => map.getContainer().classList.toggle("vr-far", map.getZoom() < 9);

    // Names sit above the lines but under the pins (Leaflet's tooltip pane is above markers).
    if (!map.getPane(LABEL_PANE)) {
      const pane = map.createPane(LABEL_PANE);
      pane.style.zIndex = "450";
      pane.style.pointerEvents = "none";
    }

    const draw = (data: BaseMapData) => {
      const next = L.layerGroup();
      const lines = L.geoJSON(
        { ...data, features: data.features.filter((f) => f.geometry.type !== "Point") } as BaseMapData,
        { interactive: false, style: (f) => LINE_STYLES[f?.properties.kind ?? "county"] ?? LINE_STYLES.county },
      );
      next.addLayer(lines);
      for (const f of data.features) {
        if (f.geometry.type !== "Point" || !f.properties.name) continue;
        const [lng, lat] = f.geometry.coordinates;
        const label = L.tooltip({
          permanent: true,
          direction: "center",
          interactive: false,
          opacity: 1,
          pane: LABEL_PANE,
          className: f.properties.kind === "state-label" ? STATE_LABEL : COUNTY_LABEL,
        })
          .setLatLng([lat, lng])
          .setContent(f.properties.name);
        next.addLayer(label);
      }
      layer?.remove();
      next.addTo(map);
      // Under the routes and anything else drawn in the overlay pane.
      lines.bringToBack();
      layer = next;
    };

    const refresh = () => {
      markZoom();
      const view = map.getBounds();
      if (covered?.contains(view)) return;
      const { key, bounds } = boxAround(view);
      if (key === wanted) return;
      wanted = key;
      loadBaseMap(key)
        .then((data) => {
          if (disposed || wanted !== key) return;
          draw(data);
          covered = bounds;
        })
        .catch(() => {
          // Without outlines the pins still work; try again on the next move.
          if (wanted === key) wanted = "";
        });
    };

    map.whenReady(refresh);
    map.on("moveend", refresh);
    return () => {
      disposed = true;
      map.off("moveend", refresh);
      layer?.remove();
      map.attributionControl?.removeAttribution(BASE_ATTRIBUTION);
    };
  }, [map]);
  return null;
}

// ---- View ---------------------------------------------------------------------------------

/** Fits the view to the content when its set of things changes (not when a pin is dragged). */
function FitView({ points, contentKey, fitTo }: { points: [number, number][]; contentKey: string; fitTo: "content" | "default" }) {
  const map = useMap();
  const latest = useRef(points);
  latest.current = points;
  useEffect(() => {
    const pts = latest.current;
    if (fitTo === "content" && pts.length > 1) {
      map.fitBounds(L.latLngBounds(pts), { padding: [40, 40], maxZoom: 13 });
    } else if (fitTo === "content" && pts.length === 1) {
      map.setView(pts[0], 13);
    } else {
      map.setView(DEFAULT_CENTRE, DEFAULT_ZOOM);
    }
  }, [map, contentKey, fitTo]);
  return null;
}

/** Keeps Leaflet's size right when the container changes size, and only lets the scroll
 *  wheel zoom once the map has been clicked or focused (so scrolling the page stays scrolling). */
function Behaviour() {
  const map = useMap();
  useEffect(() => {
    const container = map.getContainer();
    const observer = new ResizeObserver(() => map.invalidateSize());
    observer.observe(container);
    const enable = () => map.scrollWheelZoom.enable();
    const disable = () => map.scrollWheelZoom.disable();
    map.on("focus click", enable);
    map.on("blur", disable);
    container.addEventListener("mouseleave", disable);
    return () => {
      observer.disconnect();
      map.off("focus click", enable);
      map.off("blur", disable);
      container.removeEventListener("mouseleave", disable);
    };
  }, [map]);
  return null;
}

// ---- Picker -------------------------------------------------------------------------------

function PickerPin({ picker }: { picker: YardMapPicker }) {
  const map = useMapEvents({
    click(event) {
      picker.onChange(roundLatLng(event.latlng));
    },
  });
  const { value } = picker;
  // Typed coordinates may put the pin out of sight: bring it into view.
  useEffect(() => {
    if (value && !map.getBounds().contains([value.lat, value.lng])) map.panTo([value.lat, value.lng]);
  }, [map, value]);
  const handlers = useMemo(
    () => ({
      dragend(event: L.DragEndEvent) {
        picker.onChange(roundLatLng((event.target as L.Marker).getLatLng()));
      },
    }),
    [picker],
  );
  if (!value) return null;
  return (
    <Marker
      position={[value.lat, value.lng]}
      icon={iconFor("selected")}
      draggable
      autoPan
      keyboard={false}
      title="The yard's pin: drag it to adjust"
      zIndexOffset={1000}
      eventHandlers={handlers}
    />
  );
}

// ---- Map ----------------------------------------------------------------------------------

export default function YardMapClient({ markers, routes = [], picker, fitTo = "content", tileUrl, tileAttribution }: YardMapProps) {
  const initialPin = useRef(picker?.value ?? null);
  const points = useMemo(() => {
    const pts: [number, number][] = markers.map((m) => [m.lat, m.lng]);
    for (const route of routes) pts.push(...route.points);
    if (initialPin.current) pts.push([initialPin.current.lat, initialPin.current.lng]);
    return pts;
  }, [markers, routes]);
  const contentKey = useMemo(() => [...markers.map((m) => `${m.id}`), "|", ...routes.map((r) => r.id)].join(","), [markers, routes]);

  return (
    <MapContainer
      center={DEFAULT_CENTRE}
      zoom={DEFAULT_ZOOM}
      minZoom={5}
      zoomSnap={0.5}
      maxZoom={tileUrl ? 19 : 15}
      scrollWheelZoom={false}
      className="h-full w-full !font-sans"
      style={{ background: PAPER, height: "100%", width: "100%" }}
    >
      {tileUrl ? <TileLayer url={tileUrl} attribution={tileAttribution ?? undefined} maxZoom={19} /> : <OfflineBaseMap />}
      <FitView points={points} contentKey={contentKey} fitTo={fitTo} />
      <Behaviour />
      {routes.map((route) => (
        <Fragment key={route.id}>
          <Polyline positions={route.points} pathOptions={{ color: "#ffffff", weight: 8, opacity: 0.9, interactive: false, className: "vr-route-casing" }} />
          <Polyline positions={route.points} pathOptions={{ color: route.colour, weight: 4.5, opacity: 1, lineJoin: "round", interactive: false, className: "vr-route" }} />
        </Fragment>
      ))}
      {markers.map((marker) => {
        const interactive = Boolean(marker.href || marker.popup);
        return (
          <Marker
            key={marker.id}
            position={[marker.lat, marker.lng]}
            icon={iconFor(marker.tone, marker.number)}
            title={marker.title}
            keyboard={interactive}
            riseOnHover
            zIndexOffset={marker.tone === "selected" ? 1000 : 0}
          >
            {interactive ? (
              <Popup>
                <div className="font-sans text-sm text-ink">
                  {marker.href ? (
                    <Link to={marker.href} className="text-base font-bold !text-pine-800 underline underline-offset-2">
                      {marker.title}
                    </Link>
                  ) : (
                    <p className="!m-0 text-base font-bold">{marker.title}</p>
                  )}
                  {marker.popup ? <p className="!mt-1 !mb-0 text-ink-soft">{marker.popup}</p> : null}
                </div>
              </Popup>
            ) : null}
          </Marker>
        );
      })}
      {picker ? <PickerPin picker={picker} /> : null}
    </MapContainer>
  );
}
