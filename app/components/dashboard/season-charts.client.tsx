import { useSyncExternalStore } from "react";
import {
  Bar,
  BarChart,
  CartesianGrid,
  Cell,
  ComposedChart,
  LabelList,
  Line,
  ReferenceLine,
  ResponsiveContainer,
  Tooltip,
  XAxis,
  YAxis,
} from "recharts";
import type { ChartSpec } from "./chart-spec";
import { formatCount, formatDollarsTick, formatGrams, formatOneDecimal, longDay } from "./format";
import { CARD, HATCHED_OCHRE, INK, INK_SOFT, LINE, OCHRE_700, SOLID_PINE } from "./palette";

// The dashboard's charts (recharts, browser only: chart-slot.tsx loads this module after
// hydration). The charts are pictures of the tables beside them: no keyboard layer of their
// own (the accessibility layer is off and the slot is one image with a name), animation off,
// axes named with their units, series told apart by fill pattern as well as colour.

const TICK = { fill: INK_SOFT, fontSize: 13 };
const AXIS_LABEL = { fill: INK, fontSize: 13, fontWeight: 600 };
const TOOLTIP_STYLE = { borderColor: LINE, borderRadius: 8, color: INK };
const COMMON = { accessibilityLayer: false } as const;

function yLabel(value: string, side: "left" | "right" = "left") {
  return { value, angle: side === "left" ? -90 : 90, position: side === "left" ? ("insideLeft" as const) : ("insideRight" as const), style: { ...AXIS_LABEL, textAnchor: "middle" as const } };
}

function xLabel(value: string) {
  return { value, position: "insideBottom" as const, offset: -4, style: AXIS_LABEL };
}

const dollars = (value: unknown) => `$${Number(value).toLocaleString("en-US", { minimumFractionDigits: 2, maximumFractionDigits: 2 })}`;
const oneDecimal = (value: unknown) => (value === null || value === undefined ? "not measured" : formatOneDecimal(Number(value)));

// Phones get narrower category axes on the charts with horizontal bars.
const NARROW = "(max-width: 639px)";
function subscribeToWidth(onChange: () => void) {
  const query = window.matchMedia(NARROW);
  query.addEventListener("change", onChange);
  return () => query.removeEventListener("change", onChange);
}
function useNarrow(): boolean {
  return useSyncExternalStore(subscribeToWidth, () => window.matchMedia(NARROW).matches, () => false);
}

export default function SeasonChart({ spec, height }: { spec: ChartSpec; height: number }) {
  const narrow = useNarrow();
  return (
    <ResponsiveContainer width="100%" height={height}>
      {chartFor(spec, narrow)}
    </ResponsiveContainer>
  );
}

function chartFor(spec: ChartSpec, narrow: boolean) {
  switch (spec.kind) {
    case "treatment":
      return (
        <ComposedChart {...COMMON} data={spec.rows} margin={{ top: 12, right: 20, bottom: 24, left: 12 }}>
          <CartesianGrid stroke={LINE} vertical={false} />
          <XAxis dataKey="tick" tick={TICK} stroke={INK_SOFT} minTickGap={16} label={xLabel("Week starting")} />
          <YAxis yAxisId="colonies" allowDecimals={false} tick={TICK} stroke={INK_SOFT} label={yLabel("Colonies treated")} />
          <YAxis yAxisId="grams" orientation="right" tick={TICK} stroke={OCHRE_700} label={yLabel("Grams used", "right")} />
          <Tooltip
            contentStyle={TOOLTIP_STYLE}
            labelFormatter={(_, payload) => String(payload?.[0]?.payload?.name ?? "")}
            formatter={(value, name) => (name === "Grams used" ? formatGrams(Number(value)) : `${formatCount(Number(value))} colonies`)}
          />
          <Bar yAxisId="colonies" dataKey="colonies" name="Colonies treated" fill={SOLID_PINE.fill} stroke={SOLID_PINE.stroke} isAnimationActive={false} />
          <Line
            yAxisId="grams"
            dataKey="grams"
            name="Grams used"
            type="linear"
            stroke={OCHRE_700}
            strokeWidth={3}
            strokeDasharray="8 4"
            dot={{ symbol: "square", r: 5, fill: OCHRE_700, stroke: CARD, strokeDasharray: "0" }}
            isAnimationActive={false}
          />
        </ComposedChart>
      );
    case "money":
      return (
        <BarChart {...COMMON} data={spec.rows} margin={{ top: 12, right: 12, bottom: 24, left: 24 }}>
          <CartesianGrid stroke={LINE} vertical={false} />
          <XAxis dataKey="tick" tick={TICK} stroke={INK_SOFT} minTickGap={16} label={xLabel("Week starting")} />
          <YAxis tick={TICK} stroke={INK_SOFT} tickFormatter={formatDollarsTick} width={72} label={yLabel("US dollars")} />
          <Tooltip contentStyle={TOOLTIP_STYLE} labelFormatter={(_, payload) => String(payload?.[0]?.payload?.name ?? "")} formatter={(value) => dollars(value)} />
          <Bar dataKey="invoiced" name="Invoiced" fill={SOLID_PINE.fill} stroke={SOLID_PINE.stroke} isAnimationActive={false} />
          <Bar dataKey="received" name="Received" fill={HATCHED_OCHRE.fill} stroke={HATCHED_OCHRE.stroke} strokeWidth={1.5} isAnimationActive={false} />
        </BarChart>
      );
    case "receivables":
      return (
        <BarChart {...COMMON} data={spec.rows} layout="vertical" margin={{ top: 8, right: narrow ? 76 : 88, bottom: 24, left: 4 }}>
          <CartesianGrid stroke={LINE} horizontal={false} />
          <XAxis type="number" tick={TICK} stroke={INK_SOFT} tickFormatter={formatDollarsTick} label={xLabel(`US dollars owed on ${longDay(spec.asOf)}`)} />
          <YAxis type="category" dataKey="name" tick={TICK} stroke={INK_SOFT} width={narrow ? 96 : 170} />
          <Tooltip contentStyle={TOOLTIP_STYLE} formatter={(value) => dollars(value)} />
          <Bar dataKey="dollars" name="Owed" minPointSize={2} isAnimationActive={false}>
            {spec.rows.map((row) => {
              const look = row.due ? HATCHED_OCHRE : SOLID_PINE;
              return <Cell key={row.name} fill={look.fill} stroke={look.stroke} strokeWidth={1.5} />;
            })}
            <LabelList dataKey="dollars" position="right" fill={INK} formatter={(value) => dollars(value)} />
          </Bar>
        </BarChart>
      );
    case "crew-days":
      return (
        <BarChart {...COMMON} data={spec.rows} layout="vertical" margin={{ top: 24, right: 24, bottom: 24, left: 4 }}>
          <CartesianGrid stroke={LINE} horizontal={false} />
          <XAxis type="number" allowDecimals tick={TICK} stroke={INK_SOFT} label={xLabel("Finished visits per crew-day")} />
          <YAxis type="category" dataKey="name" tick={TICK} stroke={INK_SOFT} width={narrow ? 72 : 120} />
          <Tooltip contentStyle={TOOLTIP_STYLE} formatter={(value) => `${formatOneDecimal(Number(value))} visits per crew-day`} />
          <Bar dataKey="average" name="Average" fill={SOLID_PINE.fill} stroke={SOLID_PINE.stroke} isAnimationActive={false}>
            <LabelList dataKey="average" position="insideLeft" fill={CARD} fontWeight={600} formatter={oneDecimal} />
          </Bar>
          {spec.overall !== null ? (
            <ReferenceLine
              x={spec.overall}
              stroke={OCHRE_700}
              strokeWidth={3}
              strokeDasharray="8 4"
              label={{ value: `All crews ${formatOneDecimal(spec.overall)}`, position: "top", fill: INK, fontSize: 13, fontWeight: 600 }}
            />
          ) : null}
        </BarChart>
      );
    case "drive":
      return (
        <BarChart {...COMMON} data={spec.rows} margin={{ top: 24, right: 12, bottom: 24, left: 12 }}>
          <CartesianGrid stroke={LINE} vertical={false} />
          <XAxis dataKey="tick" tick={TICK} stroke={INK_SOFT} minTickGap={16} label={xLabel("Week starting")} />
          <YAxis tick={TICK} stroke={INK_SOFT} label={yLabel("Drive minutes per colony")} />
          <Tooltip
            contentStyle={TOOLTIP_STYLE}
            labelFormatter={(_, payload) => String(payload?.[0]?.payload?.name ?? "")}
            formatter={(value) => `${oneDecimal(value)} min per colony`}
          />
          <Bar dataKey="minutesPerColony" name="Drive minutes per colony" fill={SOLID_PINE.fill} stroke={SOLID_PINE.stroke} isAnimationActive={false}>
            <LabelList dataKey="minutesPerColony" position="top" fill={INK} formatter={(value) => (value === null || value === undefined ? "" : formatOneDecimal(Number(value)))} />
          </Bar>
        </BarChart>
      );
    case "mites": {
      // An area without washes in a phase gets a bar of no length and says so, so a missing
      // bar is never read as a load of 0.
      const rows = spec.rows.map((row) => ({ ...row, beforeBar: row.before ?? 0, afterBar: row.after ?? 0 }));
      type Row = (typeof rows)[number];
      const say = (phase: "before" | "after") => (row: Row) => (row[phase] === null ? `${phase}: no wash` : `${phase} ${formatOneDecimal(row[phase])}`);
      return (
        <BarChart {...COMMON} data={rows} layout="vertical" barCategoryGap="18%" margin={{ top: 8, right: narrow ? 100 : 112, bottom: 24, left: 4 }}>
          <CartesianGrid stroke={LINE} horizontal={false} />
          <XAxis type="number" tick={TICK} stroke={INK_SOFT} label={xLabel("Mites per 100 bees")} />
          <YAxis type="category" dataKey="name" tick={TICK} stroke={INK_SOFT} width={narrow ? 88 : 140} />
          <Tooltip
            contentStyle={TOOLTIP_STYLE}
            formatter={(_, name, item) => {
              const row = item.payload as Row;
              const value = name === "Before (first round)" ? row.before : row.after;
              return value === null ? "no wash" : `${formatOneDecimal(value)} per 100 bees`;
            }}
          />
          <Bar dataKey="beforeBar" name="Before (first round)" minPointSize={2} fill={HATCHED_OCHRE.fill} stroke={HATCHED_OCHRE.stroke} strokeWidth={1.5} isAnimationActive={false}>
            <LabelList dataKey={say("before")} position="right" fill={INK} />
          </Bar>
          <Bar dataKey="afterBar" name="After (later rounds)" minPointSize={2} fill={SOLID_PINE.fill} stroke={SOLID_PINE.stroke} isAnimationActive={false}>
            <LabelList dataKey={say("after")} position="right" fill={INK} />
          </Bar>
        </BarChart>
      );
    }
  }
}
