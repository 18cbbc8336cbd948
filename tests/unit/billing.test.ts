import { describe, expect, it } from "vitest";
import { formatDollars, formatInvoiceNumber, invoiceForVisit, taxCentsOn } from "~/domain/billing";

// Worked examples: arithmetic done by hand beside each case (no outside source needed;
// the rounding rule is Varroute's own, documented in app/domain/billing.ts).
const prices = { pricePerColonyCents: 2500, tripFeeCents: 3500, minimumPerVisitCents: 5000, taxRateBasisPoints: 800 };

describe("invoiceForVisit", () => {
  it("charges colonies treated × price plus the trip fee, with tax on the subtotal", () => {
    // 6 × $25.00 = $150.00; + $35.00 trip = $185.00; 8 % = $14.80; total $199.80.
    const invoice = invoiceForVisit({ ...prices, coloniesTreated: 6 }, { yardName: "Ridge", roundNumber: 2, roundsPlanned: 3 });
    expect(invoice.lines).toEqual([
      { kind: "colony", description: "Oxalic acid vapor treatment, round 2 of 3: 6 colonies × $25.00", quantity: 6, unitCents: 2500, amountCents: 15000 },
      { kind: "trip_fee", description: "Trip fee: Ridge", quantity: 1, unitCents: 3500, amountCents: 3500 },
    ]);
    expect(invoice).toMatchObject({ subtotalCents: 18500, taxCents: 1480, totalCents: 19980 });
  });

  it("with no colony treated, charges the trip fee topped up to the minimum", () => {
    // 0 colonies: $35.00 trip < $50.00 minimum → top-up $15.00; subtotal $50.00; tax $4.00.
    const invoice = invoiceForVisit({ ...prices, coloniesTreated: 0 });
    expect(invoice.lines.map((l) => [l.kind, l.amountCents])).toEqual([
      ["trip_fee", 3500],
      ["minimum", 1500],
    ]);
    expect(invoice).toMatchObject({ subtotalCents: 5000, taxCents: 400, totalCents: 5400 });
  });

  it("with no colony treated and no minimum, charges the trip fee only", () => {
    // $35.00 + 8 % ($2.80) = $37.80.
    const invoice = invoiceForVisit({ ...prices, minimumPerVisitCents: 0, coloniesTreated: 0 });
    expect(invoice.lines.map((l) => l.kind)).toEqual(["trip_fee"]);
    expect(invoice).toMatchObject({ subtotalCents: 3500, taxCents: 280, totalCents: 3780 });
  });

  it("tops up to the minimum when colonies and trip fee fall short, and not when they reach it", () => {
    // 1 colony: $25.00 + $35.00 = $60.00 ≥ $50.00 → no top-up.
    expect(invoiceForVisit({ ...prices, coloniesTreated: 1 }).lines.map((l) => l.kind)).toEqual(["colony", "trip_fee"]);
    // Minimum $100.00: 1 colony $25.00 + $35.00 = $60.00 → top-up $40.00; subtotal $100.00; tax $8.00.
    const topped = invoiceForVisit({ ...prices, minimumPerVisitCents: 10000, coloniesTreated: 1 });
    expect(topped.lines[2]).toEqual({ kind: "minimum", description: "Minimum charge per visit ($100.00): top-up", quantity: 1, unitCents: 4000, amountCents: 4000 });
    expect(topped).toMatchObject({ subtotalCents: 10000, taxCents: 800, totalCents: 10800 });
    // Exactly at the minimum: 1 colony $15.00 + $35.00 = $50.00 → no top-up.
    expect(invoiceForVisit({ ...prices, pricePerColonyCents: 1500, coloniesTreated: 1 }).lines).toHaveLength(2);
  });

  it("rounds tax half up to the cent, once, on the subtotal", () => {
    // 5 % of 30 ¢ = 1.5 ¢ → 2 ¢ (half goes up); 5 % of 29 ¢ = 1.45 ¢ → 1 ¢.
    expect(taxCentsOn(30, 500)).toBe(2);
    expect(taxCentsOn(29, 500)).toBe(1);
    // 8.75 % of 40 ¢ = 3.5 ¢ → 4 ¢; 8.75 % of 39 ¢ = 3.4125 ¢ → 3 ¢.
    expect(taxCentsOn(40, 875)).toBe(4);
    expect(taxCentsOn(39, 875)).toBe(3);
    // 8 % of 6 ¢ = 0.48 ¢ → 0 ¢; 8 % of 7 ¢ = 0.56 ¢ → 1 ¢; no tax → 0.
    expect(taxCentsOn(6, 800)).toBe(0);
    expect(taxCentsOn(7, 800)).toBe(1);
    expect(taxCentsOn(123_456, 0)).toBe(0);
    // A whole invoice at 8.88 % (888 bp): 3 colonies × $9.99 = $29.97 + $4.99 trip = $34.96;
    // 8.88 % of 3496 ¢ = 310.4448 ¢ → 310 ¢.
    const invoice = invoiceForVisit({ coloniesTreated: 3, pricePerColonyCents: 999, tripFeeCents: 499, minimumPerVisitCents: 0, taxRateBasisPoints: 888 });
    expect(invoice).toMatchObject({ subtotalCents: 3496, taxCents: 310, totalCents: 3806 });
    // Tax on the subtotal, not per line: 3 colonies × 10 ¢ + 10 ¢ trip at 5 % would be
    // 1.5 → 2 ¢ + 0.5 → 1 ¢ = 3 ¢ line by line; on the 40 ¢ subtotal it is 2 ¢.
    expect(invoiceForVisit({ coloniesTreated: 3, pricePerColonyCents: 10, tripFeeCents: 10, minimumPerVisitCents: 0, taxRateBasisPoints: 500 }).taxCents).toBe(2);
  });

  it("keeps large counts exact in whole cents", () => {
    // 100 000 colonies × $25.00 = $2,500,000.00; + $35.00 = $2,500,035.00; 8 % = $200,002.80.
    const invoice = invoiceForVisit({ ...prices, coloniesTreated: 100_000 });
    expect(invoice).toMatchObject({ subtotalCents: 250_003_500, taxCents: 20_000_280, totalCents: 270_003_780 });
    // A subtotal whose product with the rate passes 2^53: 9e12 ¢ × 875 bp = 7.875e15 + 5000, / 10 000.
    expect(taxCentsOn(9_000_000_000_003, 875)).toBe(787_500_000_000); // 787 500 000 000.2625 → down
    expect(() => invoiceForVisit({ ...prices, coloniesTreated: Number.MAX_SAFE_INTEGER })).toThrow(RangeError);
  });

  it("every amount is a whole number of cents and the total adds up", () => {
    for (let colonies = 0; colonies <= 30; colonies++) {
      for (const bp of [0, 1, 400, 800, 875, 888, 3000]) {
        const invoice = invoiceForVisit({ ...prices, coloniesTreated: colonies, taxRateBasisPoints: bp });
        for (const line of invoice.lines) {
          expect(Number.isInteger(line.amountCents)).toBe(true);
          expect(line.amountCents).toBe(line.quantity * line.unitCents);
        }
        expect(invoice.subtotalCents).toBe(invoice.lines.reduce((s, l) => s + l.amountCents, 0));
        expect(invoice.subtotalCents).toBeGreaterThanOrEqual(prices.minimumPerVisitCents);
        expect(invoice.totalCents).toBe(invoice.subtotalCents + invoice.taxCents);
        expect(invoice.taxCents).toBe(Math.floor((invoice.subtotalCents * bp + 5000) / 10000));
      }
    }
  });

  it("refuses fractional or negative money and counts", () => {
    expect(() => invoiceForVisit({ ...prices, coloniesTreated: 1.5 })).toThrow(RangeError);
    expect(() => invoiceForVisit({ ...prices, coloniesTreated: -1 })).toThrow(RangeError);
    expect(() => invoiceForVisit({ ...prices, coloniesTreated: 1, pricePerColonyCents: 24.99 })).toThrow(RangeError);
    expect(() => taxCentsOn(100, 8.5)).toThrow(RangeError);
    expect(() => taxCentsOn(100, -1)).toThrow(RangeError);
  });
});

describe("formatInvoiceNumber", () => {
  it("writes the year and a sequence of at least four digits", () => {
    expect(formatInvoiceNumber(2026, 1)).toBe("2026-0001");
    expect(formatInvoiceNumber(2026, 42)).toBe("2026-0042");
    expect(formatInvoiceNumber(2027, 9999)).toBe("2027-9999");
    expect(formatInvoiceNumber(2027, 10000)).toBe("2027-10000");
  });

  it("refuses sequence 0 and odd years", () => {
    expect(() => formatInvoiceNumber(2026, 0)).toThrow(RangeError);
    expect(() => formatInvoiceNumber(2026, 1.5)).toThrow(RangeError);
    expect(() => formatInvoiceNumber(10000, 1)).toThrow(RangeError);
  });
});

describe("formatDollars", () => {
  it("formats whole cents without floating point", () => {
    expect(formatDollars(0)).toBe("$0.00");
    expect(formatDollars(5)).toBe("$0.05");
    expect(formatDollars(2500)).toBe("$25.00");
    expect(formatDollars(250_003_500)).toBe("$2,500,035.00");
  });
});
