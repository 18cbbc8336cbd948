import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

test("the office filters the invoices, opens an open one and records a part payment by cheque", async ({ page }) => {
  const [open] = await queryTestDatabase<{ id: number; number: string; total_cents: number }>(
    "select id, number, total_cents from invoices where status = 'open' and not exists (select 1 from payments p where p.invoice_id = invoices.id) order by id limit 1",
  );
  await signIn(page, DEMO.office);
  await page.goto("/office/invoices");
  await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/office-invoices-1280.png", fullPage: true });
  await page.goto(`/office/invoices?status=open&q=${open.number}`);
  await expect(page.getByRole("link", { name: open.number })).toBeVisible();
  await page.getByRole("link", { name: open.number }).click();
  await expect(page).toHaveURL(new RegExp(`/office/invoices/${open.id}$`));

  // A part payment: half the total, by cheque.
  const half = Math.floor(open.total_cents / 2);
  await page.getByLabel("Amount (dollars)").first().fill((half / 100).toFixed(2));
  await page.getByLabel("Method").selectOption("cheque");
  await page.getByLabel("Reference (optional)").fill("Cheque 1042");
  await page.getByRole("button", { name: "Record payment" }).click();
  await expect(page.getByText("Cheque 1042")).toBeVisible();
  const [state] = await queryTestDatabase<{ paid: number; status: string }>(
    "select coalesce((select sum(amount_cents) from payments where invoice_id = $1), 0)::int as paid, (select status from invoices where id = $1) as status",
    [open.id],
  );
  expect(state).toEqual({ paid: half, status: "open" });
  await page.screenshot({ path: "test-results/screenshots/office-invoice-1280.png", fullPage: true });

  // More than what is still owed is refused at the field.
  await page.getByLabel("Amount (dollars)").first().fill(((open.total_cents - half + 100) / 100).toFixed(2));
  await page.getByRole("button", { name: "Record payment" }).click();
  await expect(page.locator("[aria-invalid=true]").first()).toBeVisible();
  const [after] = await queryTestDatabase<{ paid: number }>("select coalesce(sum(amount_cents), 0)::int as paid from payments where invoice_id = $1", [open.id]);
  expect(after.paid).toBe(half);
});
