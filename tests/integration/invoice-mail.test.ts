import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import net from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { formatDollars } from "~/domain/billing";
import { defaultBusinessSettings } from "~/domain/settings";
import { deliverQueuedEmails } from "~/models/emails.server";
import { handleInvoiceIssued, invoiceDedupeKey, queueInvoiceEmail } from "~/models/invoice-mail.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { INVOICE_ISSUED_QUEUE, jobsBoss, stopJobs, type InvoiceIssuedJob } from "~/services/jobs.server";
import { createMailTransport } from "~/services/mail.server";
import { verifyPayLinkToken } from "~/services/pay-link.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { emailsTo, waitForEmail, type SinkEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// The invoice e-mail after a finished visit, through the real local SMTP sink (maildev).
// Each customer's address is unique to this run (crew-fixtures), so the shared sink is
// read by recipient and never cleared.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const DATE = "2026-11-10";
let crew: TestCrew;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North", "NY-C-12345");
  const [user] = await db("users").insert({ email: "owner@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(
    db,
    {
      ...defaultBusinessSettings,
      businessName: "Test Apiary Services",
      businessAddress: "1 Test Road, Testville, NY 10000",
      productName: "Test oxalic acid dihydrate",
      productRegistrationNumber: "EPA Reg. No. 00000-0",
      pricePerColonyCents: 2500,
      tripFeeCents: 3500,
      minimumPerVisitCents: 5000,
      taxRateBasisPoints: 800,
      paymentTermsDays: 14,
    },
    Number(user.id),
  );
});

/** A stop whose colonies are all treated, finished by the crew; returns the invoice id. */
async function finishedStop(colonies = 3): Promise<{ stop: TestStop; invoiceId: number }> {
  const stop = await aStop(db, crew, { date: DATE, colonies, rounds: 1 });
  const userId = crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const label of stop.labels) {
    await recordTally(db, { visitId: stop.visitId, crewId: crew.id, userId, idempotencyKey: aKey("tally"), colonyLabel: label, outcome: "treated", recordedAt: new Date() });
  }
  const result = await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId, finishKey: aKey("finish") });
  expect(result.invoiceId).toEqual(expect.any(Number));
  return { stop, invoiceId: result.invoiceId! };
}

const isInvoice = (email: SinkEmail) => email.subject.startsWith("Invoice ");

async function invoiceEmailsTo(to: string): Promise<SinkEmail[]> {
  return (await emailsTo(to)).filter(isInvoice);
}

/** A loopback port with nothing listening on it. */
async function closedPort(): Promise<number> {
  const server = net.createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as net.AddressInfo;
  await new Promise<void>((resolve) => server.close(() => resolve()));
  return port;
}

/** The text of a PDF, as poppler's pdftotext reads it, with runs of white space as one space. */
function pdfText(pdf: Buffer): string {
  const dir = mkdtempSync(path.join(tmpdir(), "invoice-pdf-"));
  try {
    const file = path.join(dir, "invoice.pdf");
    writeFileSync(file, pdf);
    return execFileSync("pdftotext", ["-enc", "UTF-8", file, "-"], { encoding: "utf8" }).replace(/\s+/g, " ");
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe("the invoice e-mail", () => {
  it("is requested when the visit is finished, and the job's handler sends one e-mail with the PDF to the customer", async () => {
    const { stop, invoiceId } = await finishedStop(3);

    // Finishing put one "invoice-issued" job on pg-boss, after commit.
    const boss = await jobsBoss();
    const jobs = await boss.fetch<InvoiceIssuedJob>(INVOICE_ISSUED_QUEUE, { batchSize: 10 });
    expect(jobs.map((job) => job.data)).toEqual([{ invoiceId }]);
    const { queued, delivery } = await handleInvoiceIssued(db, jobs[0].data.invoiceId);
    await boss.complete(INVOICE_ISSUED_QUEUE, jobs[0].id);
    expect(queued.status).toBe("queued");
    expect(delivery).toBe("sent");

    const invoice = (await db("invoices").where({ id: invoiceId }).first())!;
    // 3 colonies × $25.00 + $35.00 trip fee = $110.00; 8 % tax = $8.80.
    expect(invoice).toMatchObject({ subtotal_cents: 11000, tax_cents: 880, total_cents: 11880 });
    expect(invoice.sent_at).toBeInstanceOf(Date);

    const email = await waitForEmail(stop.customerEmail, isInvoice);
    expect(email.subject).toMatch(new RegExp(`^Invoice ${invoice.number}: \\$118\\.80, due `));
    expect(email.attachments ?? []).toHaveLength(1);
    const [attachment] = email.attachments!;
    expect(attachment.contentType).toBe("application/pdf");
    // maildev 3 gives the original name as `filename`.
    expect((attachment as { filename?: string }).filename).toBe(`invoice-${invoice.number}.pdf`);
    expect(attachment.length ?? (attachment as { size?: number }).size).toBeGreaterThan(1000);
    expect(email.html).toContain("Safety with oxalic acid vapor");

    // The pay link in the e-mail is signed for this invoice.
    const token = /\/pay\/([A-Za-z0-9._-]+)/.exec(email.html)?.[1];
    expect(token).toBeTruthy();
    expect(verifyPayLinkToken(token!)).toMatchObject({ ok: true, invoiceId });

    const row = (await db("email_log").where({ dedupe_key: invoiceDedupeKey(invoiceId) }).first())!;
    expect(row).toMatchObject({ kind: "invoice", status: "sent", attempts: 1, invoice_id: invoiceId, customer_id: stop.customerId, visit_id: stop.visitId });
  });

  it("is sent once when the job runs twice, one after the other or at the same time", async () => {
    const { stop, invoiceId } = await finishedStop(2);
    const first = await handleInvoiceIssued(db, invoiceId);
    const again = await handleInvoiceIssued(db, invoiceId);
    const both = await Promise.all([handleInvoiceIssued(db, invoiceId), queueInvoiceEmail(db, invoiceId)]);
    expect(first).toMatchObject({ queued: { status: "queued" }, delivery: "sent" });
    expect(again).toEqual({ queued: { status: "already-queued", emailId: first.queued.emailId }, delivery: null });
    expect(both[0]).toEqual({ queued: { status: "already-queued", emailId: first.queued.emailId }, delivery: null });
    expect(both[1]).toEqual({ status: "already-queued", emailId: first.queued.emailId });

    await waitForEmail(stop.customerEmail, isInvoice);
    // Let a stray second message arrive if there were one.
    await new Promise((resolve) => setTimeout(resolve, 500));
    expect(await invoiceEmailsTo(stop.customerEmail)).toHaveLength(1);
    expect(await db("email_log").where({ invoice_id: invoiceId })).toHaveLength(1);
  });

  it("with SMTP unreachable is marked failed with a retry time, and a later sweep sends it exactly once", async () => {
    const { stop, invoiceId } = await finishedStop(2);
    const down = createMailTransport({ SMTP_HOST: "127.0.0.1", SMTP_PORT: await closedPort() });
    const { queued, delivery } = await handleInvoiceIssued(db, invoiceId, { transport: down });
    expect(queued.status).toBe("queued");
    expect(delivery).toBe("failed");
    const emailId = queued.emailId!;

    const failed = (await db("email_log").where({ id: emailId }).first())!;
    expect(failed).toMatchObject({ status: "failed", attempts: 1, sent_at: null, invoice_id: invoiceId });
    expect(failed.last_error).toMatch(/ECONNREFUSED|ECONNECTION/);
    const { rows } = await db.raw<{ rows: { future: boolean }[] }>("select next_attempt_at > now() as future from email_log where id = ?", [emailId]);
    expect(rows[0].future).toBe(true);
    // The job running again leaves the failed e-mail to its backoff: nothing new, nothing sent.
    expect(await handleInvoiceIssued(db, invoiceId)).toEqual({ queued: { status: "already-queued", emailId }, delivery: null });
    expect(await db("email_log").where({ id: emailId }).first()).toMatchObject({ status: "failed", attempts: 1 });

    // The retry time passes while the sink is back: two sweeps at once send it once.
    await db("email_log").where({ id: emailId }).update({ next_attempt_at: db.raw("now() - interval '1 second'") as unknown as Date });
    await Promise.all([deliverQueuedEmails(db), deliverQueuedEmails(db)]);
    const email = await waitForEmail(stop.customerEmail, isInvoice);
    expect(email.attachments?.map((a) => a.contentType)).toEqual(["application/pdf"]);
    expect(await db("email_log").where({ id: emailId }).first()).toMatchObject({ status: "sent", attempts: 2, last_error: null, next_attempt_at: null });
    await deliverQueuedEmails(db);
    await new Promise((resolve) => setTimeout(resolve, 500));
    expect(await invoiceEmailsTo(stop.customerEmail)).toHaveLength(1);
  });

  it("carries a PDF whose text holds the invoice number, each line and the total", async () => {
    const { invoiceId } = await finishedStop(4);
    const { queued } = await handleInvoiceIssued(db, invoiceId);
    const row = (await db("email_log").where({ id: queued.emailId! }).first())!;
    expect(row.attachments).toHaveLength(1);
    const pdf = Buffer.from(row.attachments![0].contentBase64, "base64");
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");

    const text = pdfText(pdf);
    const invoice = (await db("invoices").where({ id: invoiceId }).first())!;
    const lines = await db("invoice_lines").where({ invoice_id: invoiceId }).orderBy("position");
    expect(lines.map((l) => l.kind)).toEqual(["colony", "trip_fee"]);
    expect(text).toContain(invoice.number);
    // Who is billing, from settings.
    expect(text).toContain("Test Apiary Services");
    expect(text).toContain("1 Test Road, Testville, NY 10000");
    for (const line of lines) {
      expect(text).toContain(line.description.replace(/\s+/g, " "));
      expect(text).toContain(formatDollars(line.amount_cents));
    }
    // 4 × $25.00 + $35.00 = $135.00; 8 % tax $10.80; total $145.80.
    expect(text).toContain("Subtotal $135.00");
    expect(text).toMatch(/Tax \$10\.80/);
    expect(text).toMatch(/Total \$145\.80/);
    expect(text).toContain("Payment is due within 14 days");
    expect(text).toMatch(/\/pay\/\d+\.\d+\./);
  });
});
