import { afterAll, describe, expect, it } from "vitest";
import { startStripeFake, type StripeFake } from "~/services/stripe-fake/server";
import { createStripeClient } from "~/services/stripe.server";

// In a container the fake Stripe server listens on every address, while the checkout links it
// hands out must use the address the browser reaches (docker-compose.yml publishes it).
const SECRET = "whsec_test_fake_address";
const started: StripeFake[] = [];
afterAll(async () => {
  await Promise.all(started.map((f) => f.stop()));
});

async function checkoutUrl(options: { host?: string; publicUrl?: string }) {
  const fake = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {}, ...options });
  started.push(fake);
  const stripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: fake.port, protocol: "http" }, local: true });
  const session = await stripe.checkout.sessions.create({
    mode: "payment",
    line_items: [{ price_data: { currency: "usd", unit_amount: 1250, product_data: { name: "Invoice 1" } }, quantity: 1 }],
    success_url: "http://app.test/paid",
    cancel_url: "http://app.test/cancel",
  });
  return { fake, url: session.url ?? "" };
}

describe("the fake Stripe server's address", () => {
  it("links checkout pages at the address it listens on by default", async () => {
    const { fake, url } = await checkoutUrl({});
    expect(url).toMatch(new RegExp(`^http://127\\.0\\.0\\.1:${fake.port}/pay/cs_`));
  });

  it("links them at the public address when one is given, listening on every address", async () => {
    const { fake, url } = await checkoutUrl({ host: "0.0.0.0", publicUrl: "http://127.0.0.1:12111/" });
    expect(fake.url).toBe("http://127.0.0.1:12111");
    expect(url).toMatch(/^http:\/\/127\.0\.0\.1:12111\/pay\/cs_/);
    // Reached on its real port through any local address.
    expect((await fetch(`http://127.0.0.1:${fake.port}${new URL(url).pathname}`)).status).toBe(200);
  });
});
