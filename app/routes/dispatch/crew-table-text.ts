// The crews table's two-line cells as text, pure so they can be tested: the table fits a
// 1280 px screen by stacking related figures in one cell instead of a column each.

/** A crew's two daily limits, colonies first: "30 colonies" / "600 g", each "No … limit" when unset. */
export function dailyLimitLines(crew: { maxColoniesPerDay: number | null; maxDoseGramsPerDay: number | null }): [colonies: string, grams: string] {
  const colonies = crew.maxColoniesPerDay == null ? "No colony limit" : `${crew.maxColoniesPerDay} ${crew.maxColoniesPerDay === 1 ? "colony" : "colonies"}`;
  const grams = crew.maxDoseGramsPerDay == null ? "No gram limit" : `${crew.maxDoseGramsPerDay} g`;
  return [colonies, grams];
}

/** Where the crew starts its day and, when elsewhere, where it ends it ("→ …"). */
export function startEndLines(crew: { startLabel: string; endLabel: string }): [start: string, end: string | null] {
  return [crew.startLabel, crew.endLabel === crew.startLabel ? null : `→ ${crew.endLabel}`];
}
