import { describe, expect, it } from "vitest";
import { SAFETY_CAUTIONS } from "~/domain/safety";
import { invoiceEmail } from "~/emails/invoice";

const input = {
  customerName: "Robin <Hood>",
  number: "2026-0007",
  issuedOn: "2026-11-10",
  dueOn: "2026-11-24",
  totalCents: 14580,
  yardName: `Hill & Dale`,
  serviceDate: "2026-11-10",
  coloniesTreated: 4,
  payUrl: "http://127.0.0.1:3000/pay/7.1790000000.sig",
};

describe("invoice e-mail", () => {
  it("gives number, dates, total, visit and the pay link, escaped, with the safety cautions", () => {
    const email = invoiceEmail(input);
    expect(email.subject).toBe("Invoice 2026-0007: $145.80, due Tue, Nov 24, 2026");
    expect(email.html).toContain("Robin &lt;Hood&gt;");
    expect(email.html).not.toContain("<Hood>");
    expect(email.html).toContain("Hill &amp; Dale");
    expect(email.html).toContain('href="http://127.0.0.1:3000/pay/7.1790000000.sig"');
    expect(email.text).toContain("Pay $145.80 online: http://127.0.0.1:3000/pay/7.1790000000.sig");
    expect(email.text).toContain("Colonies treated: 4");
    expect(email.text).toContain("Due: Tue, Nov 24, 2026");
    for (const caution of SAFETY_CAUTIONS) expect(email.text).toContain(caution.title);
  });

  it("leaves the pay button out without a pay link", () => {
    const email = invoiceEmail({ ...input, payUrl: null, yardName: null, serviceDate: null });
    expect(email.html).not.toContain("/pay/");
    expect(email.text).toContain("for your Varroa treatment");
  });
});
