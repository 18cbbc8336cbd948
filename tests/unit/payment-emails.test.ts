import { describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import { escapeHtml } from "~/emails/layout";
import { overdueReminderEmail, paymentReceiptEmail } from "~/emails/payment";

const PAY_URL = "http://127.0.0.1:3000/pay/41.1790000000.signature";

const receipt = {
  customerName: "Sam <Keeper> & Co",
  invoiceNumber: "2026-000041",
  amountCents: 123_456,
  method: "cheque" as const,
  reference: "Cheque 1042",
  receivedOn: "2026-11-20",
  balanceCents: 0,
};

const reminder = {
  customerName: "Sam <Keeper> & Co",
  invoiceNumber: "2026-000041",
  dueOn: "2026-11-03",
  daysOverdue: 17,
  balanceCents: 9_905,
  payUrl: PAY_URL,
};

function expectCautions(email: { html: string; text: string }) {
  for (const caution of SAFETY_CAUTIONS) {
    expect(email.text).toContain(`- ${caution.title}. ${caution.text}`);
    expect(email.html).toContain(escapeHtml(caution.text));
  }
  expect(email.text).toContain(LABEL_DEFERENCE_NOTICE);
}

describe("payment receipt e-mail", () => {
  it("gives the amount, method with reference, date, invoice and 'paid in full', escaped, with the cautions", () => {
    const email = paymentReceiptEmail(receipt);
    expect(email.subject).toBe("Receipt for invoice 2026-000041: $1,234.56 received");
    expect(email.text).toContain("Amount received: $1,234.56");
    expect(email.text).toContain("Paid by: Cheque");
    expect(email.text).toContain("Reference: Cheque 1042");
    expect(email.text).toContain("Date received: Fri, Nov 20, 2026");
    expect(email.text).toContain("Invoice: 2026-000041");
    expect(email.text).toContain("Invoice 2026-000041 is paid in full.");
    expect(email.text).not.toContain("still owed");
    expect(email.html).toContain("Sam &lt;Keeper&gt; &amp; Co");
    expect(email.html).not.toContain("<Keeper>");
    expect(email.html).not.toContain("/pay/");
    expectCautions(email);
  });

  it("says what is still owed after a part payment, with a pay button only when a link is given", () => {
    const part = { ...receipt, method: "cash" as const, reference: null, amountCents: 5_000, balanceCents: 7_550 };
    const withLink = paymentReceiptEmail({ ...part, payUrl: PAY_URL });
    expect(withLink.subject).toBe("Receipt for invoice 2026-000041: $50.00 received");
    expect(withLink.text).toContain("Paid by: Cash");
    expect(withLink.text).not.toContain("Reference:");
    expect(withLink.text).toContain("Still owed: $75.50");
    expect(withLink.text).toContain("$75.50 is still owed on invoice 2026-000041.");
    expect(withLink.text).not.toContain("paid in full");
    expect(withLink.html).toContain(`href="${PAY_URL}"`);
    expect(withLink.text).toContain(`Pay the remaining $75.50 online: ${PAY_URL}`);

    const withoutLink = paymentReceiptEmail({ ...part, payUrl: null });
    expect(withoutLink.html).not.toContain("/pay/");
    expect(withoutLink.text).toContain("by cheque or in cash");
    expectCautions(withoutLink);
  });

  it("names a card payment as such", () => {
    const email = paymentReceiptEmail({ ...receipt, method: "card", reference: "pi_test_123" });
    expect(email.text).toContain("Paid by: Card");
    expect(email.text).toContain("Reference: pi_test_123");
  });
});

describe("overdue reminder e-mail", () => {
  it("gives the invoice, due date, days overdue, balance and the pay button, politely, with the cautions", () => {
    const email = overdueReminderEmail(reminder);
    expect(email.subject).toBe("Reminder: invoice 2026-000041, $99.05 due since Tue, Nov 3, 2026");
    expect(email.text).toContain("Invoice: 2026-000041");
    expect(email.text).toContain("Due: Tue, Nov 3, 2026");
    expect(email.text).toContain("Days overdue: 17");
    expect(email.text).toContain("Still owed: $99.05");
    expect(email.text).toContain("(17 days ago)");
    expect(email.text).toContain("If you have paid in the last few days, thank you");
    expect(email.text).toContain("By cheque, with the invoice number 2026-000041 written on it.");
    expect(email.text).toContain("In cash, quoting invoice 2026-000041.");
    expect(email.text).toContain("Online by card, with the pay link above.");
    expect(email.html).toContain(`href="${PAY_URL}"`);
    expect(email.text).toContain(`Pay $99.05 online: ${PAY_URL}`);
    expect(email.html).toContain("Sam &lt;Keeper&gt; &amp; Co");
    expect(email.html).not.toContain("<Keeper>");
    expectCautions(email);
  });

  it("leaves the pay button and the online way out without a pay link, and says '1 day'", () => {
    const email = overdueReminderEmail({ ...reminder, payUrl: null, daysOverdue: 1 });
    expect(email.html).not.toContain("/pay/");
    expect(email.text).not.toContain("online");
    expect(email.text).toContain("(1 day ago)");
    expect(email.text).toContain("By cheque");
    expectCautions(email);
  });

  it("refuses an amount that is not whole cents", () => {
    expect(() => overdueReminderEmail({ ...reminder, balanceCents: 12.5 })).toThrow();
    expect(() => paymentReceiptEmail({ ...receipt, amountCents: -1 })).toThrow();
  });
});
