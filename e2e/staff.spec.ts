import { DEMO, expect, linkPath, signIn, test, waitForEmail } from "./fixtures";

// The owner's staff journey: the owner invites a new office worker from the staff page; the
// worker (another browser) follows the e-mailed link, sets a password and lands in the
// office; the owner deactivates them, and the worker's open page stops working at the next
// navigation. Only the person invited here is changed: the demo accounts other specs use
// are left alone.

test("owner invites an office worker → worker sets a password and lands on /office → owner deactivates them → their page goes to sign-in", async ({ page, browser }) => {
  test.setTimeout(120_000);
  const stamp = Date.now().toString(36);
  const worker = { name: `Wren Tallyman ${stamp}`, email: `staff-e2e-${stamp}@example.test`, password: "copper meadow lantern orbit" };

  // 1. The owner opens the staff page from the office navigation and sends the invitation.
  await signIn(page, DEMO.owner);
  await page.goto("/office");
  await page.getByRole("navigation", { name: "Main" }).filter({ visible: true }).getByRole("link", { name: "Staff", exact: true }).click();
  await expect(page).toHaveURL(/\/office\/staff$/);
  await expect(page.getByRole("heading", { name: "Staff", level: 1 })).toBeVisible();
  const inviteForm = page.getByRole("form", { name: "Invite someone" });
  await inviteForm.getByLabel("Name").fill(worker.name);
  await inviteForm.getByLabel("E-mail").fill(worker.email);
  await inviteForm.getByLabel("Role").selectOption("office");
  await inviteForm.getByRole("button", { name: "Send the invitation" }).click();
  await expect(page.getByRole("status").filter({ hasText: `Invitation sent to ${worker.email}` })).toBeVisible();
  const row = page.getByRole("row").filter({ hasText: worker.email });
  await expect(row).toContainText("Invited");

  // 2. The worker follows the e-mailed link in their own browser and sets a password.
  const email = await waitForEmail(worker.email, /invited you to/);
  const invitee = await browser.newContext();
  const workerPage = await invitee.newPage();
  try {
    await workerPage.goto(linkPath(email, "/invite/"));
    await expect(workerPage.getByRole("heading", { level: 1, name: /^Join / })).toBeVisible();
    await expect(workerPage.getByText(/invited you to work in .* as office/)).toBeVisible();
    await workerPage.getByLabel("Password", { exact: true }).fill(worker.password);
    await workerPage.getByLabel("Password again").fill(worker.password);
    await workerPage.getByRole("button", { name: "Set password and sign in" }).click();
    await expect(workerPage).toHaveURL(/\/office$/);
    await expect(workerPage.getByText(worker.name).filter({ visible: true }).first()).toBeVisible();

    // The link worked once.
    const again = await invitee.request.get(linkPath(email, "/invite/"), { maxRedirects: 0 });
    expect(again.status()).toBe(404);

    // 3. The owner sees them active and deactivates them.
    await page.reload();
    await expect(row).toContainText("Active");
    await row.getByRole("button", { name: `Deactivate ${worker.name}` }).click();
    await expect(row).toContainText("Deactivated");
    await expect(row.getByRole("status")).toContainText(/Deactivated and signed out of \d+ sessions?\./);

    // 4. The worker's open page stops working: the next navigation goes to sign-in.
    await workerPage.getByRole("navigation", { name: "Main" }).filter({ visible: true }).getByRole("link", { name: "Customers" }).click();
    await expect(workerPage).toHaveURL(/\/sign-in/);
    // And the password no longer signs them in.
    await signIn(workerPage, worker.email, worker.password);
    await expect(workerPage).toHaveURL(/\/sign-in/);
    await expect(workerPage.locator("[aria-invalid=true], [role=alert]").first()).toBeVisible();
  } finally {
    await invitee.close();
  }
});
