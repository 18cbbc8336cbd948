import { describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS, safetyCaution } from "~/domain/safety";

describe("safety cautions", () => {
  it("lists the cautions of the product brief, each once", () => {
    // Source: docs/sources.md "The six safety cautions": respirator, sealed eye protection,
    // acid-resistant gloves, no honey supers for human consumption, follow the label, local
    // licensing for hire.
    const ids = SAFETY_CAUTIONS.map((c) => c.id);
    expect(ids).toEqual(["respirator", "eye-protection", "gloves", "honey-supers", "label", "licensing"]);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it("says what each caution asks for", () => {
    expect(safetyCaution("respirator").text).toMatch(/acid-gas/);
    expect(safetyCaution("respirator").text).toMatch(/particulate/);
    expect(safetyCaution("eye-protection").text).toMatch(/sealed/i);
    expect(safetyCaution("gloves").text).toMatch(/acid-resistant/);
    expect(safetyCaution("honey-supers").text).toMatch(/honey supers/);
    expect(safetyCaution("label").text).toMatch(/label/);
    expect(safetyCaution("licensing").text).toMatch(/licen[cs]e/);
  });

  it("quotes the OSHA exposure limit correctly", () => {
    // Source: OSHA PEL 1 mg/m³ TWA (29 CFR 1910.1000 Table Z-1).
    expect(safetyCaution("respirator").text).toContain("1 mg/m³");
  });

  it("keeps titles short and texts to one paragraph", () => {
    for (const caution of SAFETY_CAUTIONS) {
      expect(caution.title.length).toBeGreaterThan(0);
      expect(caution.title.length).toBeLessThanOrEqual(40);
      expect(caution.text).not.toContain("\n");
    }
  });

  it("defers to the label and local rules in one paragraph", () => {
    expect(LABEL_DEFERENCE_NOTICE).toMatch(/label/);
    expect(LABEL_DEFERENCE_NOTICE).toMatch(/local/);
    expect(LABEL_DEFERENCE_NOTICE).toMatch(/licen[cs]e/);
    expect(LABEL_DEFERENCE_NOTICE).not.toContain("\n");
  });

  it("refuses an unknown caution", () => {
    expect(() => safetyCaution("hat" as never)).toThrow(RangeError);
  });
});
