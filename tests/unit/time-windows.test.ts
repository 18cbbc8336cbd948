import { describe, expect, it } from "vitest";
import { windowForPreference } from "~/domain/time-windows";

// Minutes from midnight: 8:00 = 480, 12:00 = 720, 17:00 = 1020.
describe("a visit's service window", () => {
  const crews = [
    { workStartMin: 480, workEndMin: 1020 },
    { workStartMin: 420, workEndMin: 960 },
  ];

  it("spans the working day of the day's crews for any time, from the earliest start to the latest end", () => {
    expect(windowForPreference("any", crews)).toEqual({ startMin: 420, endMin: 1020 });
  });

  it("ends mornings at noon and starts afternoons there", () => {
    expect(windowForPreference("morning", crews)).toEqual({ startMin: 420, endMin: 720 });
    expect(windowForPreference("afternoon", crews)).toEqual({ startMin: 720, endMin: 1020 });
  });

  it("takes 8:00–17:00 when no crew works, and never turns a window inside out", () => {
    expect(windowForPreference("any", [])).toEqual({ startMin: 480, endMin: 1020 });
    const lateCrew = [{ workStartMin: 780, workEndMin: 1080 }];
    expect(windowForPreference("morning", lateCrew)).toEqual({ startMin: 720, endMin: 720 });
    const earlyCrew = [{ workStartMin: 360, workEndMin: 660 }];
    expect(windowForPreference("afternoon", earlyCrew)).toEqual({ startMin: 720, endMin: 720 });
  });
});
