import Stripe from "stripe";
import { describe, expect, it } from "vitest";
import { keyPath, parseStripeForm } from "~/services/stripe-fake/form";
import { stripeSignatureHeader } from "~/services/stripe-fake/server";

describe("the fake Stripe server's form-body parsing", () => {
  it("splits bracketed keys into a path", () => {
    expect(keyPath("email")).toEqual(["email"]);
    expect(keyPath("metadata[invoiceId]")).toEqual(["metadata", "invoiceId"]);
    expect(keyPath("line_items[0][price_data][unit_amount]")).toEqual(["line_items", "0", "price_data", "unit_amount"]);
    expect(keyPath("expand[]")).toEqual(["expand", ""]);
  });

  it("reads a Checkout Session body as the SDK encodes it", () => {
    // The encoding of stripe.checkout.sessions.create({...}) in stripe-node: nested objects in
    // brackets, arrays by index, URL-encoded values.
    const body = [
      "mode=payment",
      "customer=cus_123",
      "line_items[0][quantity]=1",
      "line_items[0][price_data][currency]=usd",
      "line_items[0][price_data][unit_amount]=2500",
      "line_items[0][price_data][product_data][name]=Invoice%202026-0001",
      "line_items[1][quantity]=2",
      "line_items[1][price_data][unit_amount]=100",
      "metadata[invoiceId]=7",
      "payment_intent_data[metadata][invoiceId]=7",
      "success_url=http%3A%2F%2F127.0.0.1%3A3000%2Fpaid%3Fs%3D%7BCHECKOUT_SESSION_ID%7D",
    ].join("&");
    expect(parseStripeForm(body)).toEqual({
      mode: "payment",
      customer: "cus_123",
      line_items: [
        { quantity: "1", price_data: { currency: "usd", unit_amount: "2500", product_data: { name: "Invoice 2026-0001" } } },
        { quantity: "2", price_data: { unit_amount: "100" } },
      ],
      metadata: { invoiceId: "7" },
      payment_intent_data: { metadata: { invoiceId: "7" } },
      success_url: "http://127.0.0.1:3000/paid?s={CHECKOUT_SESSION_ID}",
    });
  });

  it("orders array items by index, appends `[]` items, and keeps '+' as a space", () => {
    expect(parseStripeForm("items[10]=k&items[2]=c&items[0]=a")).toEqual({ items: ["a", "c", "k"] });
    expect(parseStripeForm("expand[]=customer&expand[]=payment_intent")).toEqual({ expand: ["customer", "payment_intent"] });
    expect(parseStripeForm("name=Ada+Lovelace&email=ada%2Bbees%40example.test")).toEqual({ name: "Ada Lovelace", email: "ada+bees@example.test" });
  });

  it("keeps metadata keys that look like numbers in an object when mixed with names", () => {
    expect(parseStripeForm("metadata[1]=a&metadata[note]=b")).toEqual({ metadata: { "1": "a", note: "b" } });
    expect(parseStripeForm("")).toEqual({});
  });
});

describe("the fake's webhook signature", () => {
  const stripe = new Stripe("sk_test_x", { telemetry: false });
  const payload = JSON.stringify({ id: "evt_1", object: "event", type: "checkout.session.completed", data: { object: {} } });

  it("verifies with the SDK's constructEvent, as Stripe's does", () => {
    const header = stripeSignatureHeader(payload, "whsec_abc");
    expect(stripe.webhooks.constructEvent(payload, header, "whsec_abc").id).toBe("evt_1");
    expect(() => stripe.webhooks.constructEvent(payload, header, "whsec_other")).toThrow();
  });

  it("matches the SDK's own test header for the same timestamp", () => {
    const timestamp = 1_790_000_000;
    expect(stripeSignatureHeader(payload, "whsec_abc", timestamp)).toBe(stripe.webhooks.generateTestHeaderString({ payload, secret: "whsec_abc", timestamp }));
  });
});
