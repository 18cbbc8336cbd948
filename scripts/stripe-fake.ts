// npm run stripe-fake: the local fake Stripe API and hosted checkout page
// (app/services/stripe-fake/server.ts). npm start and npm test run it on 127.0.0.1:12111.
import { startStripeFake } from "~/services/stripe-fake/server";
import { LOCAL_STRIPE_WEBHOOK_SECRET } from "~/services/stripe-local";

const port = Number(process.env.STRIPE_FAKE_PORT ?? 12111);
// In a container: listen on every address, and give browsers the published address.
const host = process.env.STRIPE_FAKE_HOST?.trim() || "127.0.0.1";
const publicUrl = process.env.STRIPE_FAKE_PUBLIC_URL?.trim() || undefined;
const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET?.trim() || LOCAL_STRIPE_WEBHOOK_SECRET;
const webhookUrl = process.env.STRIPE_WEBHOOK_URL?.trim() || "http://127.0.0.1:3000/api/stripe/webhook";

const fake = await startStripeFake({ port, host, publicUrl, webhookSecret, webhookUrl, log: (line) => console.log(`${new Date().toISOString()} ${line}`) });
console.log(`fake Stripe listening on ${fake.url} (webhooks to ${webhookUrl})`);

function shutdown() {
  void fake.stop().then(() => process.exit(0));
  setTimeout(() => process.exit(0), 2000).unref();
}
process.on("SIGTERM", shutdown);
process.on("SIGINT", shutdown);
