import { handleStripeWebhook, WebhookRejected } from "~/models/payments.server";
import { db } from "~/services/db.server";

// POST /api/stripe/webhook — Stripe's (or the local fake's) event deliveries. No session:
// the Stripe-Signature header over the raw body is the authentication. 400 for a bad
// signature (Stripe does not retry it); 500 for anything else, so Stripe delivers again.
export async function action({ request }: { request: Request }) {
  if (request.method !== "POST") return Response.json({ error: "Method not allowed" }, { status: 405, headers: { allow: "POST" } });
  const rawBody = await request.text();
  try {
    const outcome = await handleStripeWebhook(db, { rawBody, signature: request.headers.get("stripe-signature") });
    return Response.json({ received: true, duplicate: outcome.duplicate });
  } catch (error) {
    if (error instanceof WebhookRejected) return Response.json({ error: error.message }, { status: 400 });
    console.error("[stripe-webhook] failed:", error);
    return Response.json({ error: "The event could not be processed; it will be delivered again." }, { status: 500 });
  }
}

export function loader() {
  return Response.json({ error: "Method not allowed" }, { status: 405, headers: { allow: "POST" } });
}
