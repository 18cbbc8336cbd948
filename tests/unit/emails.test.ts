import { describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import { bookingCancelledEmail, bookingConfirmationEmail, visitReminderEmail, visitRescheduledEmail } from "~/emails/booking";
import { CUSTOMER_SAFETY_INTRO, escapeHtml, type EmailContent } from "~/emails/layout";

const PORTAL = "http://127.0.0.1:3000/portal/bookings";
const HOSTILE = `<script>alert("x")</script> & 'Co'`;

const confirmation = (overrides: Partial<Parameters<typeof bookingConfirmationEmail>[0]> = {}) =>
  bookingConfirmationEmail({
    customerName: "Robin Hive",
    serviceDate: "2026-11-03",
    timePreference: "afternoon",
    yards: [
      { name: "North field", colonies: 6, address: "4 Ridge Road" },
      { name: "Orchard", colonies: 1 },
    ],
    roundsNote: "Brood is present: two more rounds follow, a week apart.",
    portalUrl: PORTAL,
    ...overrides,
  });

const reminder = (overrides: Partial<Parameters<typeof visitReminderEmail>[0]> = {}) =>
  visitReminderEmail({
    customerName: "Robin Hive",
    serviceDate: "2026-11-03",
    timePreference: "morning",
    yards: [{ name: "North field", colonies: 6 }],
    portalUrl: PORTAL,
    ...overrides,
  });

const rescheduled = (overrides: Partial<Parameters<typeof visitRescheduledEmail>[0]> = {}) =>
  visitRescheduledEmail({
    customerName: "Robin Hive",
    yardName: "North field",
    colonies: 6,
    fromDate: "2026-11-03",
    toDate: "2026-11-10",
    reason: "Rain forecast",
    portalUrl: PORTAL,
    ...overrides,
  });

const cancelled = (overrides: Partial<Parameters<typeof bookingCancelledEmail>[0]> = {}) =>
  bookingCancelledEmail({
    customerName: "Robin Hive",
    yardName: "North field",
    serviceDate: "2026-11-03",
    reason: "Colonies sold",
    portalUrl: PORTAL,
    ...overrides,
  });

const ALL: [string, () => EmailContent][] = [
  ["booking confirmation", () => confirmation()],
  ["visit reminder", () => reminder()],
  ["visit rescheduled", () => rescheduled()],
  ["booking cancelled", () => cancelled()],
];

describe("booking e-mails", () => {
  it.each(ALL)("%s carries every safety caution and the label notice, in HTML and text", (_, make) => {
    const { html, text } = make();
    for (const caution of SAFETY_CAUTIONS) {
      expect(html).toContain(escapeHtml(caution.title));
      expect(html).toContain(escapeHtml(caution.text));
      expect(text).toContain(`${caution.title}. ${caution.text}`);
    }
    expect(html).toContain(escapeHtml(LABEL_DEFERENCE_NOTICE));
    expect(text).toContain(LABEL_DEFERENCE_NOTICE);
    expect(html).toContain(escapeHtml(CUSTOMER_SAFETY_INTRO));
    expect(text).toContain(CUSTOMER_SAFETY_INTRO);
    expect(CUSTOMER_SAFETY_INTRO).toMatch(/people and pets away/);
    expect(CUSTOMER_SAFETY_INTRO).toMatch(/honey supers off/);
  });

  it.each(ALL)("%s loads nothing from outside: no images, fonts, style sheets or scripts", (_, make) => {
    const { html } = make();
    expect(html).not.toMatch(/<img|<link|<script|@import|url\(|@font-face/i);
    expect(html.match(/https?:\/\/[^"'\s<]+/g) ?? []).toEqual([PORTAL]);
    expect(html).toContain("Varroute");
  });

  it("escapes names and notes in the HTML and keeps them readable in the text", () => {
    const content = confirmation({
      customerName: HOSTILE,
      yards: [{ name: HOSTILE, colonies: 2, address: `<b>bold</b>` }],
      roundsNote: HOSTILE,
    });
    expect(content.html).not.toContain("<script>");
    expect(content.html).not.toContain("<b>bold</b>");
    expect(content.html).toContain("&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#39;Co&#39;");
    expect(content.text).toContain(`Hello ${HOSTILE},`);

    for (const other of [
      reminder({ customerName: HOSTILE, yards: [{ name: HOSTILE, colonies: 1 }] }),
      rescheduled({ customerName: HOSTILE, yardName: HOSTILE, reason: HOSTILE }),
      cancelled({ customerName: HOSTILE, yardName: HOSTILE, reason: HOSTILE }),
    ]) {
      expect(other.html).not.toContain("<script>");
      expect(other.html).toContain("&lt;script&gt;");
    }
  });

  it("keeps a subject on one line and a link only when it is http(s)", () => {
    const { subject } = cancelled({ yardName: "North\r\nBcc: someone@example.test" });
    expect(subject).not.toMatch(/[\r\n]/);
    const { html } = confirmation({ portalUrl: "javascript:alert(1)" });
    expect(html).not.toContain("javascript:");
    expect(html).toContain('href="#"');
  });

  it("formats service days as the screens do", () => {
    // Source: calendar: 3 November 2026 is a Tuesday, 10 November 2026 a Tuesday.
    const booked = confirmation();
    expect(booked.subject).toBe("Booking confirmed: Varroa treatment on Tue, Nov 3, 2026");
    expect(booked.html).toContain("Tue, Nov 3, 2026");
    expect(booked.text).toContain("Date: Tue, Nov 3, 2026");
    expect(booked.text).toContain("Time: Afternoon");
    expect(booked.text).not.toContain("2026-11-03");

    const moved = rescheduled();
    expect(moved.subject).toBe("Your treatment visit has moved to Tue, Nov 10, 2026");
    expect(moved.text).toContain("Was: Tue, Nov 3, 2026");
    expect(moved.text).toContain("Now: Tue, Nov 10, 2026");
    expect(moved.text).toContain("Reason: Rain forecast");
  });

  it("lists the yards with colony counts and the total in the confirmation", () => {
    const { text, html } = confirmation();
    expect(text).toContain("North field: 6 colonies (4 Ridge Road)");
    expect(text).toContain("Orchard: 1 colony");
    expect(text).toContain("Colonies: 7 colonies");
    expect(text).toContain("Brood is present: two more rounds follow, a week apart.");
    expect(html).toContain(`href="${PORTAL}"`);
  });

  it("asks in the reminder for supers off and pets in, and says what to expect", () => {
    const { subject, text } = reminder({ timePreference: "any" });
    expect(subject).toBe("Reminder: Varroa treatment tomorrow, Tue, Nov 3, 2026");
    expect(text).toMatch(/Remove the honey supers today/);
    expect(text).toMatch(/Keep pets indoors/);
    expect(text).toMatch(/What to expect/);
    expect(text).toContain("Time: Any time of day");
  });

  it("leaves out an empty reason", () => {
    expect(cancelled({ reason: null }).text).not.toContain("Reason:");
    expect(rescheduled({ reason: "  " }).text).not.toContain("Reason:");
    expect(cancelled().text).toContain("Reason: Colonies sold");
  });
});
