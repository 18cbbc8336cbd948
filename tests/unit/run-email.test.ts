import { describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import { runPublishedEmail } from "~/emails/run";

const input = {
  crewName: "Crew <1>",
  serviceDate: "2026-12-08",
  stops: [
    { position: 2, yardName: "Varna Orchard", arrive: "10:46", colonies: 1, grams: 2 },
    { position: 1, yardName: `Hill & Dale "North"`, arrive: "08:12", colonies: 20, grams: 40 },
  ],
  totalGrams: 42,
  appUrl: "http://127.0.0.1:3000/crew",
};

describe("run published e-mail", () => {
  it("lists the stops in order with arrival, colonies and grams, the grams to carry, and a link to the run", () => {
    const email = runPublishedEmail(input);
    expect(email.subject).toBe("Your run: Crew <1>, Tue, Dec 8, 2026 (2 stops)");
    expect(email.text).toContain("- 1. 08:12 Hill & Dale \"North\": 20 colonies, 40.00 g\n- 2. 10:46 Varna Orchard: 1 colony, 2.00 g");
    expect(email.text).toContain("Oxalic acid dihydrate to carry: 42.00 g");
    expect(email.text).toContain("Open the run: http://127.0.0.1:3000/crew");
    expect(email.html).toContain("Hill &amp; Dale &quot;North&quot;");
    expect(email.html).not.toContain("Crew <1>");
  });

  it("ends with every oxalic acid vapor caution and the label notice, for the crew", () => {
    const email = runPublishedEmail(input);
    for (const caution of SAFETY_CAUTIONS) expect(email.text).toContain(`- ${caution.title}. ${caution.text}`);
    expect(email.text).toContain(LABEL_DEFERENCE_NOTICE);
    expect(email.text).toContain("Before every dose:");
  });

  it("says the run changed when a re-planned run is published again", () => {
    const email = runPublishedEmail({ ...input, version: 2 });
    expect(email.subject).toMatch(/^Run changed: Crew <1>/);
    expect(email.text).toContain("it replaces the one sent before");
  });
});
