// What each dashboard chart draws: plain, serialisable rows, made by the page from the
// dashboard's figures (the same numbers as the tables beside the charts).

export type TreatmentChart = { kind: "treatment"; rows: { tick: string; name: string; colonies: number; grams: number }[] };
export type MoneyChart = { kind: "money"; rows: { tick: string; name: string; invoiced: number; received: number }[] };
export type ReceivablesChart = { kind: "receivables"; asOf: string; rows: { name: string; dollars: number; due: boolean }[] };
export type CrewDaysChart = { kind: "crew-days"; rows: { name: string; average: number }[]; overall: number | null };
export type DriveChart = { kind: "drive"; rows: { tick: string; name: string; minutesPerColony: number | null }[] };
export type MitesChart = { kind: "mites"; rows: { name: string; before: number | null; after: number | null }[] };

export type ChartSpec = TreatmentChart | MoneyChart | ReceivablesChart | CrewDaysChart | DriveChart | MitesChart;

/** Height in pixels of a chart drawn with horizontal bars, one band per row. */
export function barListHeight(rows: number, perRow = 44): number {
  return Math.max(180, 80 + rows * perRow);
}
