import { randomUUID } from "node:crypto";
import net from "node:net";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import { bookingConfirmationEmail } from "~/emails/booking";
import { deliverEmail, deliverQueuedEmails, queueEmail, type OutgoingEmail } from "~/models/emails.server";
import { queueVisitReminders } from "~/models/reminders.server";
import { db } from "~/services/db.server";
import { jobsBoss, requestEmailDelivery, SEND_EMAIL_QUEUE, stopJobs, type SendEmailJob } from "~/services/jobs.server";
import { createMailTransport } from "~/services/mail.server";
import { emailsTo, waitForEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// E-mail goes through the real local SMTP sink (maildev, see mail-sink.ts). The sink is
// shared with other test files, so every recipient here is unique to this run.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const run = randomUUID().slice(0, 8);
const address = (name: string) => `${name}.${run}@example.test`;

function anEmail(overrides: Partial<OutgoingEmail> = {}): OutgoingEmail {
  return {
    kind: "test",
    to: address("someone"),
    subject: "A test message",
    html: "<p>Hello</p>",
    text: "Hello",
    ...overrides,
  };
}

async function emailLogCount(): Promise<number> {
  const row = await db("email_log").count<{ n: number }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

async function aCustomer(name: string, email: string): Promise<number> {
  const [row] = await db("customers").insert({ name, email }).returning("id");
  return Number(row.id);
}

async function aYard(customerId: number, name: string, colonies: number): Promise<number> {
  const [row] = await db("yards").insert({ customer_id: customerId, name, lat: 42.44, lng: -76.5, colony_count: colonies }).returning("id");
  return Number(row.id);
}

async function aVisit(yardId: number, serviceDate: string, colonies: number, status: "scheduled" | "deferred" | "cancelled" | "done" = "scheduled") {
  const [course] = await db("courses").insert({ yard_id: yardId, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
  await db("visits").insert({ course_id: course.id, yard_id: yardId, round_number: 1, service_date: serviceDate, colonies_expected: colonies, status });
}

/** What a reader sees of an HTML body: tags dropped, entities decoded, spaces collapsed. */
function textOf(html: string): string {
  return html
    .replace(/<[^>]*>/g, " ")
    .replace(/&lt;/g, "<")
    .replace(/&gt;/g, ">")
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, "&")
    .replace(/\s+/g, " ")
    .replace(/ ([.,:])/g, "$1");
}

/** A loopback port with nothing listening on it. */
async function closedPort(): Promise<number> {
  const server = net.createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as net.AddressInfo;
  await new Promise<void>((resolve) => server.close(() => resolve()));
  return port;
}

describe("queueing e-mail", () => {
  it("leaves nothing behind when the caller's transaction rolls back", async () => {
    const attempt = db.transaction(async (trx) => {
      const id = await queueEmail(trx, anEmail());
      expect(id).toEqual(expect.any(Number));
      throw new Error("booking refused");
    });
    await expect(attempt).rejects.toThrow("booking refused");
    expect(await emailLogCount()).toBe(0);
  });

  it("queues an e-mail once per dedupe key", async () => {
    const first = await db.transaction((trx) => queueEmail(trx, anEmail({ dedupeKey: "booking_confirmation:1" })));
    const second = await db.transaction((trx) => queueEmail(trx, anEmail({ dedupeKey: "booking_confirmation:1", subject: "Again" })));
    expect(first).toEqual(expect.any(Number));
    expect(second).toBeNull();
    const rows = await db("email_log");
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ id: first, status: "queued", attempts: 0, subject: "A test message", html: "<p>Hello</p>", text_body: "Hello" });
    // E-mails without a key never collide.
    await queueEmail(db, anEmail());
    await queueEmail(db, anEmail());
    expect(await emailLogCount()).toBe(3);
  });
});

describe("delivering e-mail", () => {
  it("sends once when two deliveries of one e-mail race", async () => {
    const to = address("race");
    const id = (await queueEmail(db, anEmail({ to, subject: "Only once" })))!;
    const results = await Promise.all([deliverEmail(db, id), deliverEmail(db, id)]);
    expect(results.sort()).toEqual(["already-sent", "sent"]);
    expect(await deliverEmail(db, id)).toBe("already-sent");

    await waitForEmail(to);
    expect(await emailsTo(to)).toHaveLength(1);
    const row = await db("email_log").where({ id }).first();
    expect(row).toMatchObject({ status: "sent", attempts: 1, last_error: null, next_attempt_at: null });
    expect(row?.sent_at).toBeInstanceOf(Date);
  });

  it("delivers a booking confirmation, requested through the send-email queue, to the customer with date, yards, colonies and cautions", async () => {
    const to = address("robin");
    const customerId = await aCustomer("Robin <Hive>", to);
    const content = bookingConfirmationEmail({
      customerName: "Robin <Hive>",
      serviceDate: "2026-11-03",
      timePreference: "morning",
      yards: [
        { name: "Hill & Dale yard", colonies: 7, address: "12 Orchard Lane" },
        { name: "Creekside", colonies: 5 },
      ],
      roundsNote: "Brood is present, so two more rounds follow a week apart.",
      portalUrl: "http://127.0.0.1:3000/portal/bookings",
    });
    const id = (await db.transaction((trx) =>
      queueEmail(trx, { kind: "booking_confirmation", to, ...content, customerId, dedupeKey: `booking_confirmation:${run}` }),
    ))!;

    // After commit the caller asks for delivery: one job on the "send-email" queue.
    await requestEmailDelivery([id]);
    const boss = await jobsBoss();
    const jobs = await boss.fetch<SendEmailJob>(SEND_EMAIL_QUEUE, { batchSize: 10 });
    expect(jobs.map((job) => job.data)).toEqual([{ emailId: id }]);
    expect(await deliverEmail(db, jobs[0].data.emailId)).toBe("sent");
    await boss.complete(SEND_EMAIL_QUEUE, jobs[0].id);

    const email = await waitForEmail(to);
    expect(email.subject).toBe("Booking confirmed: Varroa treatment on Tue, Nov 3, 2026");
    expect(email.from).toEqual([{ address: "bookings@varroute.test", name: "Varroute" }]);
    const html = email.html;
    expect(html).toContain("Hill &amp; Dale yard");
    expect(html).toContain("Robin &lt;Hive&gt;");
    expect(html).not.toContain("<Hive>");
    const shown = textOf(html);
    // Source: calendar: 3 November 2026 is a Tuesday.
    expect(shown).toContain("Tue, Nov 3, 2026");
    expect(shown).toContain("Hill & Dale yard: 7 colonies (12 Orchard Lane)");
    expect(shown).toContain("Creekside: 5 colonies");
    expect(shown).toContain("12 colonies");
    expect(shown).toContain("Keep people and pets away from the hives");
    for (const caution of SAFETY_CAUTIONS) {
      expect(shown).toContain(`${caution.title}. ${caution.text}`);
    }
    expect(shown).toContain(LABEL_DEFERENCE_NOTICE);
    expect(email.text).toContain("Keep people and pets away from the hives");
    expect(email.text).toContain("Hill & Dale yard: 7 colonies (12 Orchard Lane)");
  });
});

describe("visit reminders", () => {
  it("queue one reminder per customer for that day's scheduled visits, once however often they run", async () => {
    const day = "2026-11-10";
    const robin = await aCustomer("Robin Hive", address("robin-reminder"));
    const sam = await aCustomer("Sam Comb", address("sam-reminder"));
    const kit = await aCustomer("Kit Brood", address("kit-reminder"));
    await aVisit(await aYard(robin, "North field", 6), day, 6);
    await aVisit(await aYard(robin, "Orchard", 3), day, 3);
    await aVisit(await aYard(robin, "Cancelled corner", 4), day, 4, "cancelled");
    await aVisit(await aYard(robin, "Next day yard", 2), "2026-11-11", 2);
    await aVisit(await aYard(sam, "Ridge", 10), day, 10);
    await aVisit(await aYard(kit, "Deferred dell", 5), day, 5, "deferred");

    const ids = await queueVisitReminders(db, day);
    expect(ids).toHaveLength(2);
    expect(await queueVisitReminders(db, day)).toEqual([]);

    const rows = await db("email_log").orderBy("id");
    expect(rows.map((r) => [r.kind, r.to_address, r.customer_id, r.dedupe_key])).toEqual([
      ["visit_reminder", address("robin-reminder"), robin, `visit_reminder:${robin}:${day}`],
      ["visit_reminder", address("sam-reminder"), sam, `visit_reminder:${sam}:${day}`],
    ]);
    const robinText = rows[0].text_body!;
    expect(robinText).toContain("North field: 6 colonies");
    expect(robinText).toContain("Orchard: 3 colonies");
    expect(robinText).toContain("9 colonies");
    expect(robinText).not.toContain("Cancelled corner");
    expect(robinText).not.toContain("Next day yard");
    expect(rows[1].text_body).toContain("Ridge: 10 colonies");

    expect(await deliverEmail(db, ids[0])).toBe("sent");
    const email = await waitForEmail(address("robin-reminder"));
    // Source: calendar: 10 November 2026 is a Tuesday.
    expect(email.subject).toBe("Reminder: Varroa treatment tomorrow, Tue, Nov 10, 2026");
    expect(email.html).toContain("Remove the honey supers");
    expect(email.html).toContain("Keep pets indoors");
  });
});

describe("when SMTP is unreachable", () => {
  it("marks the e-mail failed with a retry time, and a later sweep sends it exactly once", async () => {
    const to = address("retry");
    const id = (await queueEmail(db, anEmail({ to, subject: "Retried" })))!;
    const down = createMailTransport({ SMTP_HOST: "127.0.0.1", SMTP_PORT: await closedPort() });

    expect(await deliverEmail(db, id, { transport: down })).toBe("failed");
    const failed = await db("email_log").where({ id }).first();
    expect(failed).toMatchObject({ status: "failed", attempts: 1, sent_at: null });
    expect(failed?.last_error).toMatch(/ECONNREFUSED|ECONNECTION/);
    const { rows } = await db.raw<{ rows: { future: boolean }[] }>("select next_attempt_at > now() as future from email_log where id = ?", [id]);
    expect(rows[0].future).toBe(true);

    // Not due yet: the sweep leaves it alone.
    expect(await deliverQueuedEmails(db)).toBe(0);
    expect(await emailsTo(to)).toHaveLength(0);

    // The retry time passes while the sink is back; two sweeps at once send it once.
    await db("email_log").where({ id }).update({ next_attempt_at: db.raw("now() - interval '1 second'") as unknown as Date });
    const sent = await Promise.all([deliverQueuedEmails(db), deliverQueuedEmails(db)]);
    expect(sent[0] + sent[1]).toBe(1);
    expect(await deliverQueuedEmails(db)).toBe(0);

    await waitForEmail(to);
    expect(await emailsTo(to)).toHaveLength(1);
    expect(await db("email_log").where({ id }).first()).toMatchObject({ status: "sent", attempts: 2, last_error: null, next_attempt_at: null });
  });
});
