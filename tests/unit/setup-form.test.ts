import { describe, expect, it } from "vitest";
import { parseSetupForm } from "~/forms/setup";

const VALID: Record<string, string> = {
  businessName: "Test business",
  businessAddress: "1 Test Road, Testville",
  timeZone: "America/Chicago",
  ownerName: "Test Owner",
  email: "owner@example.test",
  password: "quiet walnut harbour drift",
  confirm: "quiet walnut harbour drift",
  depotLabel: "Depot",
  lat: "42.49",
  lng: "-76.3",
  productName: "Test product",
  productRegistrationNumber: "TEST-REG-0001",
  labelMaximumGramsPerBroodBox: "0.6",
  doseGramsPerBroodBox: "0.6",
  pricePerColonyCents: "12.50",
  tripFeeCents: "30",
  minimumPerVisitCents: "40",
  taxRatePercent: "0",
};

describe("setup's dose rates for smaller boxes", () => {
  it("scales medium and nuc rates with the deep rate, so a low label maximum never refuses a field the form does not show", () => {
    const parsed = parseSetupForm(VALID);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    // 0.6 g per deep box: medium 0.7 × 0.6 = 0.42 g, nuc 0.5 × 0.6 = 0.3 g (the default shares).
    expect(parsed.input.settings.doseGramsPerMediumBox).toBe(0.42);
    expect(parsed.input.settings.doseGramsPerNucBox).toBe(0.3);
    expect(parsed.input.settings.doseAboveLabelConfirmed).toBe(false);
  });

  it("still refuses a deep rate above the label maximum, at the deep rate's field", () => {
    const parsed = parseSetupForm({ ...VALID, doseGramsPerBroodBox: "0.8" });
    expect(parsed.ok).toBe(false);
    if (parsed.ok) return;
    expect(parsed.errors.doseGramsPerBroodBox).toMatch(/label maximum/);
    expect(parsed.errors).not.toHaveProperty("doseGramsPerMediumBox");
  });

  it("asks for no tick box set-up does not have, and marks no field set-up does not show", () => {
    // 1.5 g a deep box over a 1 g label: the medium box scaled to 1.05 g is above the label too.
    const parsed = parseSetupForm({ ...VALID, labelMaximumGramsPerBroodBox: "1", doseGramsPerBroodBox: "1.5" });
    expect(parsed.ok).toBe(false);
    if (parsed.ok) return;
    expect(parsed.errors.doseGramsPerBroodBox).toMatch(/exceeds the label maximum you entered \(1 g\)\. Follow the product label\. Keep to the label here/);
    expect(parsed.errors.doseGramsPerBroodBox).not.toMatch(/tick/);
    expect(parsed.errors).not.toHaveProperty("doseGramsPerMediumBox");
    expect(parsed.errors).not.toHaveProperty("doseGramsPerNucBox");
  });
});

describe("setup's product registration number", () => {
  it("is required at its own field: no default stands in for the owner's label", () => {
    const parsed = parseSetupForm({ ...VALID, productRegistrationNumber: " " });
    expect(parsed.ok).toBe(false);
    if (parsed.ok) return;
    expect(Object.keys(parsed.errors)).toEqual(["productRegistrationNumber"]);
    expect(parsed.errors.productRegistrationNumber).toMatch(/Enter the registration number/);
  });
});
