import { describe, expect, it } from "vitest";
import { invoiceForVisit, taxCentsOn } from "~/domain/billing";
import { doseGramsForColony } from "~/domain/dose";
import { plannedCourseSpanProblem } from "~/domain/treatment-guards";
import { validateBusinessSettings } from "~/domain/settings";
import { buildDemoPlan, checkPlan, DEMO_SETTINGS } from "../../seeds/demo";

// The demo is made with the app's own rules: the settings it saves are valid settings, and
// every invoice and dose in it is what the app's functions give for its tallies with those
// settings. Its figures are never a test's expected values elsewhere; here they are checked
// against the rules only.
const plan = buildDemoPlan("2026-10-15");

describe("demo data follows the app's rules", () => {
  it("saves settings the settings page would accept", () => {
    const checked = validateBusinessSettings(DEMO_SETTINGS);
    expect(checked.ok).toBe(true);
    expect(plannedCourseSpanProblem(DEMO_SETTINGS.roundsWithBrood, DEMO_SETTINGS.roundIntervalDays)).toBeNull();
  });

  it("bills every finished visit as the billing function does with those settings", () => {
    expect(plan.invoices.length).toBeGreaterThan(0);
    for (const invoice of plan.invoices) {
      const treated = invoice.visit.tallies.filter((t) => t.outcome === "treated").length;
      const expected = invoiceForVisit({
        coloniesTreated: treated,
        pricePerColonyCents: DEMO_SETTINGS.pricePerColonyCents,
        tripFeeCents: DEMO_SETTINGS.tripFeeCents,
        minimumPerVisitCents: DEMO_SETTINGS.minimumPerVisitCents,
        taxRateBasisPoints: DEMO_SETTINGS.taxRateBasisPoints,
      });
      expect(invoice.lines.map((l) => l.amountCents)).toEqual(expected.lines.map((l) => l.amountCents));
      expect(invoice.subtotal).toBe(invoice.lines.reduce((s, l) => s + l.amountCents, 0));
      expect(invoice.tax).toBe(taxCentsOn(invoice.subtotal, DEMO_SETTINGS.taxRateBasisPoints));
      expect(invoice.total).toBe(invoice.subtotal + invoice.tax);
    }
    checkPlan(plan);
  });

  it("doses every treated colony at the settings' rate per brood box, and no colony past the season's cap", () => {
    const perColonyYear = new Map<string, number>();
    for (const visit of plan.visits) {
      for (const tally of visit.tallies) {
        if (tally.outcome !== "treated") continue;
        expect(tally.broodBoxes).toBeGreaterThanOrEqual(1);
        expect(tally.doseGrams).toBe(doseGramsForColony(tally.broodBoxes, DEMO_SETTINGS.doseGramsPerBroodBox));
        const key = `${plan.yards.indexOf(visit.yard)}/${tally.colony.label}/${visit.date.slice(0, 4)}`;
        perColonyYear.set(key, (perColonyYear.get(key) ?? 0) + 1);
      }
    }
    expect(Math.max(...perColonyYear.values())).toBeLessThanOrEqual(DEMO_SETTINGS.maxApplicationsPerColonyPerSeason);
  });
});
