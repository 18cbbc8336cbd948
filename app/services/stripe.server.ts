import Stripe from "stripe";
import { type ServerEnv, serverEnv } from "./env.server";
import { LOCAL_STRIPE_HOST, LOCAL_STRIPE_PORT, LOCAL_STRIPE_SECRET_KEY, LOCAL_STRIPE_WEBHOOK_SECRET } from "./stripe-local";

// The one Stripe client of the app. With STRIPE_SECRET_KEY unset it talks to the local fake
// Stripe server (scripts/stripe-fake.ts, 127.0.0.1:12111) with a test key; with a real key
// and STRIPE_API_HOST unset, the same code talks to Stripe. STRIPE_API_HOST/PORT/PROTOCOL
// point a real or test key at another server (e.g. the fake on another port).

export type StripeEnv = Pick<ServerEnv, "STRIPE_SECRET_KEY" | "STRIPE_WEBHOOK_SECRET" | "STRIPE_API_HOST" | "STRIPE_API_PORT" | "STRIPE_API_PROTOCOL">;

export type StripeConfig = {
  secretKey: string;
  webhookSecret: string;
  /** Where the API is: null means Stripe itself. */
  api: { host: string; port: number; protocol: "http" | "https" } | null;
  /** Whether the local fake (or another test server) stands in for Stripe. */
  local: boolean;
};

export function stripeConfig(env: StripeEnv = serverEnv()): StripeConfig {
  const secretKey = env.STRIPE_SECRET_KEY ?? LOCAL_STRIPE_SECRET_KEY;
  const local = env.STRIPE_SECRET_KEY === undefined || env.STRIPE_API_HOST !== undefined;
  const webhookSecret = env.STRIPE_WEBHOOK_SECRET ?? (local ? LOCAL_STRIPE_WEBHOOK_SECRET : undefined);
  if (!webhookSecret) throw new Error("STRIPE_WEBHOOK_SECRET must be set when STRIPE_SECRET_KEY is a real Stripe key.");
  const api =
    env.STRIPE_API_HOST !== undefined || env.STRIPE_SECRET_KEY === undefined
      ? {
          host: env.STRIPE_API_HOST ?? LOCAL_STRIPE_HOST,
          port: env.STRIPE_API_PORT ?? LOCAL_STRIPE_PORT,
          protocol: env.STRIPE_API_PROTOCOL ?? ("http" as const),
        }
      : null;
  return { secretKey, webhookSecret, api, local };
}

/** A Stripe client for a configuration (tests point one at a fake on a random port). */
export function createStripeClient(config: StripeConfig = stripeConfig()): Stripe {
  if (!config.api) return new Stripe(config.secretKey, { maxNetworkRetries: 2, timeout: 20_000, telemetry: false });
  return new Stripe(config.secretKey, {
    host: config.api.host,
    port: config.api.port,
    protocol: config.api.protocol,
    maxNetworkRetries: 0,
    timeout: 10_000,
    telemetry: false,
  });
}

const globalForStripe = globalThis as unknown as { __varrouteStripe?: Stripe };

/** The app's shared client, made on first use from the environment. */
export function stripeClient(): Stripe {
  globalForStripe.__varrouteStripe ??= createStripeClient();
  return globalForStripe.__varrouteStripe;
}

export { Stripe };
