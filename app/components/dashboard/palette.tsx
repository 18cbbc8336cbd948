// Colours and fill patterns of the dashboard's charts, from Varroute's palette (app/app.css).
// Two series never differ by colour alone: one is solid, the other hatched, and the legend
// and the tables name them. The patterns are defined once per page (ChartPatterns) and
// referenced by id from the charts and the legend swatches alike.

export const INK = "#17201c";
export const INK_SOFT = "#3d4a44";
export const LINE = "#d5d2c7";
export const CARD = "#ffffff";
export const PINE_700 = "#175a43";
export const PINE_50 = "#eaf3ef";
export const OCHRE_700 = "#8a520a";
export const OCHRE_100 = "#fbeccf";

export const HATCH_ID = "vr-dash-hatch";

/** A series' look: a fill (colour or pattern) and the edge drawn round it. */
export type SeriesLook = { fill: string; stroke: string };

export const SOLID_PINE: SeriesLook = { fill: PINE_700, stroke: PINE_700 };
export const HATCHED_OCHRE: SeriesLook = { fill: `url(#${HATCH_ID})`, stroke: OCHRE_700 };

/** The patterns the charts use; render once on the page, before the charts. */
export function ChartPatterns() {
  return (
    <svg width="0" height="0" aria-hidden="true" focusable="false" style={{ position: "absolute" }}>
      <defs>
        <pattern id={HATCH_ID} width="7" height="7" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <rect width="7" height="7" fill={OCHRE_100} />
          <line x1="0" y1="0" x2="0" y2="7" stroke={OCHRE_700} strokeWidth="3.5" />
        </pattern>
      </defs>
    </svg>
  );
}

/** A small square (bar series) or line-and-marker (line series) in a series' look. */
export function Swatch({ look, shape = "bar" }: { look: SeriesLook; shape?: "bar" | "line" }) {
  return (
    <svg width="28" height="16" viewBox="0 0 28 16" aria-hidden="true" focusable="false" className="shrink-0">
      {shape === "bar" ? (
        <rect x="1" y="1" width="26" height="14" rx="2" fill={look.fill} stroke={look.stroke} strokeWidth="2" />
      ) : (
        <>
          <line x1="1" y1="8" x2="27" y2="8" stroke={look.stroke} strokeWidth="3" strokeDasharray="6 3" />
          <rect x="9.5" y="3.5" width="9" height="9" fill={look.stroke} />
        </>
      )}
    </svg>
  );
}

/** The key to a chart's series, in words beside the swatches (drawn on the server too). */
export function ChartKey({ items }: { items: { label: string; look: SeriesLook; shape?: "bar" | "line" }[] }) {
  return (
    <ul className="flex flex-wrap gap-x-5 gap-y-1 text-sm text-ink" aria-label="Key to the chart">
      {items.map((item) => (
        <li key={item.label} className="flex items-center gap-2">
          <Swatch look={item.look} shape={item.shape} />
          <span>{item.label}</span>
        </li>
      ))}
    </ul>
  );
}
