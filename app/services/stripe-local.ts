// The local fake Stripe server's settings, shared by the app's defaults (env.server.ts,
// stripe.server.ts) and the fake itself (scripts/stripe-fake.ts). Test-mode only: these
// values never reach real Stripe, which refuses any key it did not issue.
export const LOCAL_STRIPE_SECRET_KEY = "sk_test_varroute_local_fake";
export const LOCAL_STRIPE_WEBHOOK_SECRET = "whsec_varroute_local_fake";
export const LOCAL_STRIPE_HOST = "127.0.0.1";
export const LOCAL_STRIPE_PORT = 12111;
