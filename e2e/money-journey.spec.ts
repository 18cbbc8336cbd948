import { DEMO, DEMO_PASSWORD, expect, queryTestDatabase, signIn, sinkEmailsTo, test, type SinkEmail } from "./fixtures";

// Runs after the crew journeys (file order): it finishes a later stop of the same run.
// Money from end to end: the crew finishes a visit; the worker e-mails the invoice with its
// PDF to the SMTP sink; the customer follows the e-mail's pay link, pays on the fake Stripe
// checkout page and comes back; the signed webhook marks the invoice paid in the portal and
// in the office's table; the office refunds the card payment through Stripe.

type Stop = { visit_id: number; yard_name: string; customer_email: string; colonies: number; status: string };

test("crew finishes → invoice e-mail with PDF → customer pays by link → paid in portal and office → office refunds", async ({ page, browser }) => {
  test.setTimeout(240_000);
  // A stop of today's run whose customer can sign in to the portal, not finished by another test.
  const stops = await queryTestDatabase<Stop>(
    `select v.id as visit_id, y.name as yard_name, cu.email as customer_email, v.status,
            (select count(*)::int from colonies col where col.yard_id = y.id and col.active) as colonies
       from runs r join crew_members cm on cm.crew_id = r.crew_id join users u on u.id = cm.user_id
       join stops s on s.run_id = r.id join visits v on v.id = s.visit_id join yards y on y.id = v.yard_id
       join customers c on c.id = y.customer_id join users cu on cu.id = c.user_id
      where u.email = $1 and r.status in ('published', 'in_progress') and r.service_date = (now() at time zone 'America/New_York')::date
      order by s.position desc`,
    [DEMO.crew],
  );
  const allStops = await queryTestDatabase<{ visit_id: number }>(
    `select v.id as visit_id from runs r join crew_members cm on cm.crew_id = r.crew_id join users u on u.id = cm.user_id
       join stops s on s.run_id = r.id join visits v on v.id = s.visit_id
      where u.email = $1 and r.status in ('published', 'in_progress') and r.service_date = (now() at time zone 'America/New_York')::date
      order by s.position`,
    [DEMO.crew],
  );
  const stop = stops.find((s) => s.status !== "done" && s.colonies > 0);
  expect(stop, "an unfinished stop today whose customer has a sign-in").toBeTruthy();
  const number = allStops.findIndex((s) => s.visit_id === stop!.visit_id) + 1;
  const emailsBefore = (await sinkEmailsTo(stop!.customer_email)).length;

  // 1. The crew treats every colony and finishes the visit.
  await page.setViewportSize({ width: 390, height: 844 });
  await signIn(page, DEMO.crew);
  await expect(page).toHaveURL(/\/crew$/);
  if (await page.getByRole("heading", { name: "Safety check before the first stop" }).isVisible()) {
    for (const item of ["Respirator", "Sealed eye protection", "Acid-resistant gloves", "Vaporizer checked"]) await page.getByLabel(new RegExp(item)).check();
    await page.getByRole("button", { name: "Start the run" }).click();
  }
  await page.getByRole("button", { name: new RegExp(`Stop ${number}: ${stop!.yard_name}`) }).click();
  await page.getByRole("button", { name: "Supers are off — start treating" }).click();
  const colonies = page.getByRole("list", { name: "Colonies to tally" }).locator(":scope > li");
  await expect(colonies).toHaveCount(stop!.colonies);
  for (let i = 0; i < stop!.colonies; i++) {
    await colonies.nth(i).getByRole("button", { name: /^Treated/ }).click();
    await expect(colonies.nth(i).getByText("Treated ✓")).toBeVisible();
  }
  await page.getByRole("button", { name: "Finish visit" }).click();
  await expect(page.getByRole("heading", { name: "Visit finished" })).toBeVisible();
  await expect(page.getByTestId("sync-status")).toHaveText(/All work sent/, { timeout: 30_000 });

  const [invoice] = await queryTestDatabase<{ id: number; number: string; total_cents: number; colonies: number }>(
    `select i.id, i.number, i.total_cents,
            (select coalesce(sum(quantity), 0)::int from invoice_lines l where l.invoice_id = i.id and l.kind = 'colony') as colonies
       from invoices i where i.visit_id = $1`,
    [stop!.visit_id],
  );
  expect(invoice, "the invoice made from the tally").toBeTruthy();
  expect(invoice.colonies).toBe(stop!.colonies);

  // 2. The worker e-mails it, with the PDF attached and a pay link.
  let invoiceEmail: SinkEmail | undefined;
  await expect
    .poll(
      async () => {
        const emails = await sinkEmailsTo(stop!.customer_email);
        invoiceEmail = emails.slice(emailsBefore).find((e) => e.subject.includes(`Invoice ${invoice.number}`));
        return Boolean(invoiceEmail);
      },
      { timeout: 60_000, message: "the invoice e-mail reaches the SMTP sink" },
    )
    .toBe(true);
  expect(invoiceEmail!.attachments?.map((a) => a.contentType)).toContain("application/pdf");
  const payPath = (invoiceEmail!.text ?? invoiceEmail!.html ?? "").match(/\/pay\/[A-Za-z0-9._~%-]+/)?.[0];
  expect(payPath, "a pay link in the e-mail").toBeTruthy();

  // 3. The customer opens the link, pays on the fake checkout page, and comes back.
  const customer = await (await browser.newContext({ viewport: { width: 390, height: 844 } })).newPage();
  await customer.goto(payPath!);
  await expect(customer.getByRole("heading", { name: `Invoice ${invoice.number}` })).toBeVisible();
  await customer.getByRole("button", { name: /^Pay / }).click();
  await expect(customer).toHaveURL(/^http:\/\/127\.0\.0\.1:12111\/pay\//);
  await customer.screenshot({ path: "test-results/screenshots/fake-checkout-390.png", fullPage: true });
  await customer.getByRole("button", { name: /^Pay / }).click();
  await expect(customer).toHaveURL(new RegExp(`${payPath!.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}\\?returned=1$`));
  await expect
    .poll(
      async () => {
        await customer.reload();
        return (await queryTestDatabase<{ status: string }>("select status from invoices where id = $1", [invoice.id]))[0].status;
      },
      { timeout: 30_000, message: "the webhook marks the invoice paid" },
    )
    .toBe("paid");
  const [payment] = await queryTestDatabase<{ id: number; amount_cents: number; method: string }>("select id, amount_cents, method from payments where invoice_id = $1", [invoice.id]);
  expect(payment).toMatchObject({ amount_cents: invoice.total_cents, method: "card" });

  // Paid in the portal, with its receipt.
  await signIn(customer, stop!.customer_email, DEMO_PASSWORD);
  await customer.goto("/portal/invoices");
  const row = customer.getByRole("row", { name: new RegExp(invoice.number) });
  await expect(row).toContainText("Paid");
  await customer.goto(`/portal/invoices/${invoice.id}`);
  await expect(customer.getByRole("heading", { name: new RegExp(invoice.number) })).toBeVisible();
  await expect(customer.getByText("Paid").first()).toBeVisible();
  await expect(customer.getByRole("link", { name: /receipt/i })).toBeVisible();
  await customer.screenshot({ path: "test-results/screenshots/portal-invoice-paid-390.png", fullPage: true });
  // The receipt e-mail follows the payment.
  await expect
    .poll(async () => (await sinkEmailsTo(stop!.customer_email)).some((e) => /receipt/i.test(e.subject) && e.subject.includes(invoice.number)), {
      timeout: 60_000,
      message: "a receipt e-mail",
    })
    .toBe(true);

  // 4. Paid in the office's table; the office refunds it through Stripe.
  const office = await (await browser.newContext({ viewport: { width: 1280, height: 800 } })).newPage();
  await signIn(office, DEMO.office);
  await office.goto(`/office/invoices?q=${invoice.number}`);
  await expect(office.getByRole("row", { name: new RegExp(invoice.number) })).toContainText("Paid");
  await office.getByRole("link", { name: invoice.number }).click();
  await expect(office).toHaveURL(new RegExp(`/office/invoices/${invoice.id}$`));
  const refund = office.locator("form").filter({ has: office.locator('input[name="intent"][value="refund"]') });
  await refund.getByLabel("Amount (dollars)").fill((invoice.total_cents / 100).toFixed(2));
  await refund.getByLabel("Reason").fill("Colonies were treated by another contractor the day before");
  await refund.getByRole("button", { name: "Refund" }).click();
  await expect(office.getByText("Colonies were treated by another contractor the day before")).toBeVisible();
  const [after] = await queryTestDatabase<{ status: string; refunded: number; stripe_refund: string | null }>(
    `select i.status, coalesce((select sum(r.amount_cents) from refunds r join payments p on p.id = r.payment_id where p.invoice_id = i.id), 0)::int as refunded,
            (select r.stripe_refund_id from refunds r where r.payment_id = $2 limit 1) as stripe_refund
       from invoices i where i.id = $1`,
    [invoice.id, payment.id],
  );
  expect(after.status).toBe("refunded");
  expect(after.refunded).toBe(invoice.total_cents);
  expect(after.stripe_refund).toMatch(/^re_/);
  await office.goto(`/office/invoices?q=${invoice.number}`);
  await expect(office.getByRole("row", { name: new RegExp(invoice.number) })).toContainText("Refunded");

  // The customer sees it refunded too.
  await customer.goto("/portal/invoices");
  await expect(customer.getByRole("row", { name: new RegExp(invoice.number) })).toContainText("Refunded");
});
