import { createHmac, randomBytes } from "node:crypto";
import http, { type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import { type FormObject, type FormValue, formRecord, formString, parseStripeForm } from "./form";

// A fake of the part of Stripe's API that Varroute calls, for local runs and tests (the usual
// stripe-mock is in no package registry). Plain node:http, state in memory. It answers the
// real `stripe` SDK (form-encoded requests, Bearer sk_test_… keys) with Stripe's object
// shapes, serves a hosted test checkout page at /pay/cs_…, and delivers events to the app's
// webhook URL signed exactly as Stripe signs them:
//   Stripe-Signature: t=<unix seconds>,v1=<hex HMAC-SHA256(secret, "<t>.<payload>")>
// Like Stripe, a POST repeated with the same Idempotency-Key and parameters gets the first
// answer again (Stripe refuses the same key with other parameters; the fake takes that as a
// new request, because tests empty their database, and so reuse ids in keys, while one fake
// keeps running). An expired session can no longer be paid, through the API or on the page.

export type FakeCustomer = {
  id: string;
  object: "customer";
  created: number;
  email: string | null;
  name: string | null;
  description: string | null;
  metadata: Record<string, string>;
  livemode: false;
};

export type FakeCheckoutSession = {
  id: string;
  object: "checkout.session";
  amount_subtotal: number;
  amount_total: number;
  cancel_url: string | null;
  client_reference_id: string | null;
  created: number;
  currency: string;
  customer: string | null;
  customer_email: string | null;
  expires_at: number;
  livemode: false;
  metadata: Record<string, string>;
  mode: "payment";
  payment_intent: string | null;
  payment_status: "unpaid" | "paid";
  status: "open" | "complete" | "expired";
  success_url: string | null;
  url: string | null;
  /** Not in Stripe's object: what the session sells, for the hosted page. */
  line_items_description: string;
  /** Not in Stripe's object: metadata given to the payment intent when paid. */
  payment_intent_metadata: Record<string, string>;
};

export type FakePaymentIntent = {
  id: string;
  object: "payment_intent";
  amount: number;
  amount_received: number;
  created: number;
  currency: string;
  customer: string | null;
  latest_charge: string;
  livemode: false;
  metadata: Record<string, string>;
  payment_method_types: string[];
  status: "succeeded";
};

export type FakeRefund = {
  id: string;
  object: "refund";
  amount: number;
  charge: string;
  created: number;
  currency: string;
  metadata: Record<string, string>;
  payment_intent: string;
  reason: string | null;
  status: "succeeded";
};

export type FakeEvent = {
  id: string;
  object: "event";
  api_version: string;
  created: number;
  data: { object: unknown };
  livemode: false;
  pending_webhooks: number;
  request: { id: string | null; idempotency_key: string | null };
  type: string;
};

export type StripeFakeOptions = {
  /** 0 picks a free port. */
  port?: number;
  /** The address it listens on (127.0.0.1 unless a container needs 0.0.0.0). */
  host?: string;
  /** How a browser reaches it, for checkout page links; defaults to http://host:port. */
  publicUrl?: string;
  webhookSecret: string;
  /** Where events are POSTed; null keeps them in `events` only (tests deliver them). */
  webhookUrl: string | null;
  /** One line per request; defaults to console.log. */
  log?: (line: string) => void;
};

export type StripeFake = {
  url: string;
  port: number;
  customers: Map<string, FakeCustomer>;
  sessions: Map<string, FakeCheckoutSession>;
  paymentIntents: Map<string, FakePaymentIntent>;
  refunds: Map<string, FakeRefund>;
  /** Every event created, in order. */
  events: FakeEvent[];
  /** Completes a session as the hosted page's Pay button does; returns the event. */
  pay(sessionId: string): Promise<FakeEvent>;
  /** Expires an open session as POST /v1/checkout/sessions/:id/expire does. */
  expire(sessionId: string): FakeCheckoutSession;
  /** The Stripe-Signature header for a payload. */
  sign(payload: string, timestamp?: number): string;
  stop(): Promise<void>;
};

const API_VERSION = "2025-01-01.fake";

export function stripeId(prefix: string): string {
  return `${prefix}_${randomBytes(12).toString("base64url").replace(/[-_]/g, "x")}`;
}

/** The header Stripe sends with a webhook: `t=…,v1=HMAC-SHA256(secret, "t.payload")`. */
export function stripeSignatureHeader(payload: string, secret: string, timestamp = Math.floor(Date.now() / 1000)): string {
  const signature = createHmac("sha256", secret).update(`${timestamp}.${payload}`, "utf8").digest("hex");
  return `t=${timestamp},v1=${signature}`;
}

class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly type: string,
    message: string,
    readonly code?: string,
    readonly param?: string,
  ) {
    super(message);
  }
}

function now(): number {
  return Math.floor(Date.now() / 1000);
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);
}

function dollars(cents: number, currency: string): string {
  const sign = currency.toLowerCase() === "usd" ? "$" : `${currency.toUpperCase()} `;
  return `${sign}${Math.floor(cents / 100).toLocaleString("en-US")}.${String(cents % 100).padStart(2, "0")}`;
}

function requiredInt(form: FormObject | FormValue | undefined, key: string, param: string, min = 0): number {
  const text = formString(form, key);
  if (text === undefined) throw new ApiError(400, "invalid_request_error", `Missing required param: ${param}.`, "parameter_missing", param);
  if (!/^\d+$/.test(text) || Number(text) < min) throw new ApiError(400, "invalid_request_error", `Invalid integer: ${text}`, "parameter_invalid_integer", param);
  return Number(text);
}

async function readBody(req: IncomingMessage): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const chunk of req) chunks.push(chunk as Buffer);
  return Buffer.concat(chunks).toString("utf8");
}

export async function startStripeFake(options: StripeFakeOptions): Promise<StripeFake> {
  const host = options.host ?? "127.0.0.1";
  const log = options.log ?? ((line: string) => console.log(line));
  const customers = new Map<string, FakeCustomer>();
  const sessions = new Map<string, FakeCheckoutSession>();
  const paymentIntents = new Map<string, FakePaymentIntent>();
  const refunds = new Map<string, FakeRefund>();
  const events: FakeEvent[] = [];
  /** Answers to POSTs sent with an Idempotency-Key, by key. */
  const idempotent = new Map<string, { request: string; status: number; payload: string }>();
  let baseUrl = "";

  const sign = (payload: string, timestamp?: number) => stripeSignatureHeader(payload, options.webhookSecret, timestamp);

  async function emit(type: string, object: unknown): Promise<FakeEvent> {
    const event: FakeEvent = {
      id: stripeId("evt"),
      object: "event",
      api_version: API_VERSION,
      created: now(),
      data: { object: structuredClone(object) },
      livemode: false,
      pending_webhooks: options.webhookUrl ? 1 : 0,
      request: { id: null, idempotency_key: null },
      type,
    };
    events.push(event);
    if (options.webhookUrl) {
      const payload = JSON.stringify(event, null, 2);
      // Like Stripe, a failed delivery (no answer, or not 2xx) is tried again; Stripe keeps
      // at it for days, the fake three times within a few seconds.
      for (let attempt = 1; attempt <= 3; attempt++) {
        try {
          const res = await fetch(options.webhookUrl, {
            method: "POST",
            headers: { "content-type": "application/json; charset=utf-8", "stripe-signature": sign(payload), "user-agent": "Stripe/1.0 (+https://stripe.com/docs/webhooks) fake" },
            body: payload,
            signal: AbortSignal.timeout(10_000),
          });
          log(`webhook ${event.type} ${event.id} → ${options.webhookUrl} ${res.status}`);
          if (res.ok || res.status === 400) break;
        } catch (error) {
          log(`webhook ${event.type} ${event.id} → ${options.webhookUrl} failed: ${error instanceof Error ? error.message : String(error)}`);
        }
        if (attempt < 3) await new Promise((r) => setTimeout(r, 500 * attempt));
      }
    }
    return event;
  }

  function publicSession(session: FakeCheckoutSession) {
    const { line_items_description: _d, payment_intent_metadata: _m, ...shape } = session;
    return shape;
  }

  function getSession(id: string): FakeCheckoutSession {
    const session = sessions.get(id);
    if (!session) throw new ApiError(404, "invalid_request_error", `No such checkout.session: '${id}'`, "resource_missing", "id");
    return session;
  }

  async function pay(sessionId: string): Promise<FakeEvent> {
    const session = getSession(sessionId);
    if (session.status !== "open") throw new ApiError(400, "invalid_request_error", `This Checkout Session is ${session.status}.`, "checkout_session_not_open");
    const pi: FakePaymentIntent = {
      id: stripeId("pi"),
      object: "payment_intent",
      amount: session.amount_total,
      amount_received: session.amount_total,
      created: now(),
      currency: session.currency,
      customer: session.customer,
      latest_charge: stripeId("ch"),
      livemode: false,
      metadata: { ...session.payment_intent_metadata },
      payment_method_types: ["card"],
      status: "succeeded",
    };
    paymentIntents.set(pi.id, pi);
    session.status = "complete";
    session.payment_status = "paid";
    session.payment_intent = pi.id;
    session.url = null;
    return emit("checkout.session.completed", publicSession(session));
  }

  function expire(sessionId: string): FakeCheckoutSession {
    const session = getSession(sessionId);
    // Stripe's words for a session that is complete or expired already.
    if (session.status !== "open") {
      throw new ApiError(400, "invalid_request_error", `Only Checkout Sessions with a status in ["open"] can be expired. This Checkout Session has a status of "${session.status}".`, "checkout_session_not_open");
    }
    session.status = "expired";
    session.url = null;
    // Like Stripe, the event follows the API answer.
    const shape = publicSession(session);
    setImmediate(() => void emit("checkout.session.expired", shape));
    return session;
  }

  // --- API -------------------------------------------------------------------------------

  async function createCustomer(form: FormObject) {
    const customer: FakeCustomer = {
      id: stripeId("cus"),
      object: "customer",
      created: now(),
      email: formString(form, "email") ?? null,
      name: formString(form, "name") ?? null,
      description: formString(form, "description") ?? null,
      metadata: formRecord(form, "metadata"),
      livemode: false,
    };
    customers.set(customer.id, customer);
    return customer;
  }

  async function createSession(form: FormObject) {
    const mode = formString(form, "mode");
    if (mode !== "payment") throw new ApiError(400, "invalid_request_error", "The fake supports mode=payment only.", "parameter_invalid", "mode");
    const successUrl = formString(form, "success_url");
    if (!successUrl) throw new ApiError(400, "invalid_request_error", "Missing required param: success_url.", "parameter_missing", "success_url");
    const customer = formString(form, "customer") ?? null;
    if (customer && !customers.has(customer)) throw new ApiError(400, "invalid_request_error", `No such customer: '${customer}'`, "resource_missing", "customer");
    const items = form.line_items;
    if (!Array.isArray(items) || items.length === 0) throw new ApiError(400, "invalid_request_error", "Missing required param: line_items.", "parameter_missing", "line_items");
    let total = 0;
    let currency = "";
    const names: string[] = [];
    items.forEach((item, i) => {
      const priceData = typeof item === "object" && !Array.isArray(item) ? item.price_data : undefined;
      if (!priceData) throw new ApiError(400, "invalid_request_error", `Missing required param: line_items[${i}][price_data].`, "parameter_missing", `line_items[${i}][price_data]`);
      const unit = requiredInt(priceData, "unit_amount", `line_items[${i}][price_data][unit_amount]`);
      const quantity = requiredInt(item, "quantity", `line_items[${i}][quantity]`, 1);
      const itemCurrency = formString(priceData, "currency");
      if (!itemCurrency) throw new ApiError(400, "invalid_request_error", `Missing required param: line_items[${i}][price_data][currency].`, "parameter_missing");
      if (currency && itemCurrency !== currency) throw new ApiError(400, "invalid_request_error", "All line items must use the same currency.");
      currency = itemCurrency;
      total += unit * quantity;
      const product = typeof priceData === "object" && !Array.isArray(priceData) ? priceData.product_data : undefined;
      names.push(formString(product, "name") ?? `Item ${i + 1}`);
    });
    if (total < 50) throw new ApiError(400, "invalid_request_error", "The Checkout Session's total amount due must add up to at least $0.50 usd", "amount_too_small");
    const id = stripeId("cs_test");
    const session: FakeCheckoutSession = {
      id,
      object: "checkout.session",
      amount_subtotal: total,
      amount_total: total,
      cancel_url: formString(form, "cancel_url") ?? null,
      client_reference_id: formString(form, "client_reference_id") ?? null,
      created: now(),
      currency,
      customer,
      customer_email: formString(form, "customer_email") ?? (customer ? (customers.get(customer)!.email ?? null) : null),
      expires_at: now() + 24 * 3600,
      livemode: false,
      metadata: formRecord(form, "metadata"),
      mode: "payment",
      payment_intent: null,
      payment_status: "unpaid",
      status: "open",
      success_url: successUrl,
      url: `${baseUrl}/pay/${id}`,
      line_items_description: names.join(", "),
      payment_intent_metadata: formRecord(form.payment_intent_data, "metadata"),
    };
    sessions.set(id, session);
    return publicSession(session);
  }

  async function createRefund(form: FormObject) {
    const piId = formString(form, "payment_intent");
    if (!piId) throw new ApiError(400, "invalid_request_error", "Missing required param: payment_intent.", "parameter_missing", "payment_intent");
    const pi = paymentIntents.get(piId);
    if (!pi) throw new ApiError(400, "invalid_request_error", `No such payment_intent: '${piId}'`, "resource_missing", "payment_intent");
    const refunded = [...refunds.values()].filter((r) => r.payment_intent === piId).reduce((sum, r) => sum + r.amount, 0);
    const left = pi.amount_received - refunded;
    if (left <= 0) throw new ApiError(400, "invalid_request_error", `Charge ${pi.latest_charge} has already been refunded.`, "charge_already_refunded");
    const amount = formString(form, "amount") === undefined ? left : requiredInt(form, "amount", "amount", 1);
    if (amount > left) {
      throw new ApiError(400, "invalid_request_error", `Refund amount (${dollars(amount, pi.currency)}) is greater than unrefunded amount on charge (${dollars(left, pi.currency)})`, "amount_too_large", "amount");
    }
    const refund: FakeRefund = {
      id: stripeId("re"),
      object: "refund",
      amount,
      charge: pi.latest_charge,
      created: now(),
      currency: pi.currency,
      metadata: formRecord(form, "metadata"),
      payment_intent: piId,
      reason: formString(form, "reason") ?? null,
      status: "succeeded",
    };
    refunds.set(refund.id, refund);
    // Like Stripe, the event follows the API answer.
    setImmediate(() => void emit("refund.created", refund));
    return refund;
  }

  /** GET /v1/checkout/sessions: newest first, filtered by payment_intent or customer. */
  function listSessions(form: FormObject) {
    const paymentIntent = formString(form, "payment_intent");
    const customer = formString(form, "customer");
    const limitText = formString(form, "limit");
    const limit = limitText === undefined ? 10 : requiredInt(form, "limit", "limit", 1);
    if (limit > 100) throw new ApiError(400, "invalid_request_error", "This value must be less than or equal to 100.", "parameter_invalid_integer", "limit");
    const found = [...sessions.values()]
      .filter((s) => (paymentIntent === undefined || s.payment_intent === paymentIntent) && (customer === undefined || s.customer === customer))
      .reverse();
    return { object: "list", data: found.slice(0, limit).map(publicSession), has_more: found.length > limit, url: "/v1/checkout/sessions" };
  }

  async function api(method: string, path: string, form: FormObject): Promise<unknown> {
    let m: RegExpMatchArray | null;
    if (method === "POST" && path === "/v1/customers") return createCustomer(form);
    if (method === "GET" && (m = path.match(/^\/v1\/customers\/([^/]+)$/))) {
      const customer = customers.get(decodeURIComponent(m[1]));
      if (!customer) throw new ApiError(404, "invalid_request_error", `No such customer: '${m[1]}'`, "resource_missing", "id");
      return customer;
    }
    if (method === "POST" && path === "/v1/checkout/sessions") return createSession(form);
    if (method === "GET" && path === "/v1/checkout/sessions") return listSessions(form);
    if (method === "GET" && (m = path.match(/^\/v1\/checkout\/sessions\/([^/]+)$/))) return publicSession(getSession(decodeURIComponent(m[1])));
    if (method === "POST" && (m = path.match(/^\/v1\/checkout\/sessions\/([^/]+)\/expire$/))) return publicSession(expire(decodeURIComponent(m[1])));
    if (method === "GET" && (m = path.match(/^\/v1\/payment_intents\/([^/]+)$/))) {
      const pi = paymentIntents.get(decodeURIComponent(m[1]));
      if (!pi) throw new ApiError(404, "invalid_request_error", `No such payment_intent: '${m[1]}'`, "resource_missing", "id");
      return pi;
    }
    if (method === "POST" && path === "/v1/refunds") return createRefund(form);
    if (method === "GET" && (m = path.match(/^\/v1\/refunds\/([^/]+)$/))) {
      const refund = refunds.get(decodeURIComponent(m[1]));
      if (!refund) throw new ApiError(404, "invalid_request_error", `No such refund: '${m[1]}'`, "resource_missing", "id");
      return refund;
    }
    throw new ApiError(404, "invalid_request_error", `Unrecognized request URL (${method}: ${path}). The fake Stripe server does not implement it.`);
  }

  // --- Hosted checkout page ------------------------------------------------------------------

  function page(title: string, body: string): string {
    return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
<style>
body{font-family:system-ui,sans-serif;background:#f6f8fa;color:#1a1f36;margin:0}
main{max-width:28rem;margin:3rem auto;background:#fff;padding:2rem;border-radius:8px;box-shadow:0 1px 4px rgba(0,0,0,.15)}
label{display:block;font-weight:600;margin:1rem 0 .25rem}input{width:100%;box-sizing:border-box;padding:.5rem;font-size:1rem;border:1px solid #8792a2;border-radius:4px}
button{margin-top:1.5rem;width:100%;padding:.75rem;font-size:1.1rem;background:#0a5bd3;color:#fff;border:0;border-radius:4px;cursor:pointer}
button:focus-visible,a:focus-visible,input:focus-visible{outline:3px solid #f5a623;outline-offset:2px}
.note{color:#4f566b;font-size:.9rem}.error{color:#b00020;font-weight:600}a{color:#0a5bd3}
</style></head><body><main>${body}</main></body></html>`;
  }

  function checkoutPage(session: FakeCheckoutSession, error?: string): string {
    const amount = dollars(session.amount_total, session.currency);
    if (session.status === "expired") {
      const back = session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url)}">Return to the merchant</a></p>` : "";
      return page("Checkout expired", `<h1>This checkout has expired</h1><p>${escapeHtml(session.line_items_description)}: nothing was charged. Start the payment again from the merchant's page.</p>${back}`);
    }
    if (session.status !== "open") {
      const back = session.success_url ? `<p><a href="${escapeHtml(successUrl(session))}">Return to the merchant</a></p>` : "";
      return page("Payment complete", `<h1>This payment is complete</h1><p>${escapeHtml(session.line_items_description)}: ${amount} paid.</p>${back}`);
    }
    return page(
      `Pay ${amount}`,
      `<p class="note">Test mode — fake Stripe checkout. No real card is charged.</p>
<h1>Pay ${amount}</h1>
<p>${escapeHtml(session.line_items_description)}</p>
${error ? `<p class="error" role="alert">${escapeHtml(error)}</p>` : ""}
<form method="post" action="/pay/${escapeHtml(session.id)}">
<label for="email">Email</label><input id="email" name="email" type="email" autocomplete="email" value="${escapeHtml(session.customer_email ?? "")}">
<label for="card">Card number</label><input id="card" name="card" inputmode="numeric" autocomplete="cc-number" value="4242 4242 4242 4242" aria-describedby="card-hint">
<p id="card-hint" class="note">Any number pays, except 4000 0000 0000 0002, which is declined.</p>
<button type="submit">Pay ${amount}</button>
</form>
${session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url)}">Cancel</a></p>` : ""}`,
    );
  }

  function successUrl(session: FakeCheckoutSession): string {
    return (session.success_url ?? "/").replaceAll("{CHECKOUT_SESSION_ID}", session.id);
  }

  function errorPayload(e: ApiError) {
    return { error: { type: e.type, message: e.message, ...(e.code ? { code: e.code } : {}), ...(e.param ? { param: e.param } : {}) } };
  }

  function send(res: ServerResponse, status: number, body: string, type: string, headers: Record<string, string> = {}) {
    res.writeHead(status, { "content-type": type, "content-length": Buffer.byteLength(body), ...headers });
    res.end(body);
  }

  async function handle(req: IncomingMessage, res: ServerResponse): Promise<number> {
    const method = req.method ?? "GET";
    const url = new URL(req.url ?? "/", baseUrl);
    const path = url.pathname;
    const body = await readBody(req);

    const payMatch = path.match(/^\/pay\/([^/]+)$/);
    if (payMatch) {
      const session = sessions.get(decodeURIComponent(payMatch[1]));
      if (!session) {
        send(res, 404, page("Not found", "<h1>This checkout page does not exist</h1>"), "text/html; charset=utf-8");
        return 404;
      }
      if (method === "GET") {
        send(res, 200, checkoutPage(session), "text/html; charset=utf-8");
        return 200;
      }
      if (method === "POST") {
        // An expired session takes no money: the page says so, nothing is charged.
        if (session.status === "expired") {
          send(res, 410, checkoutPage(session), "text/html; charset=utf-8");
          return 410;
        }
        if (session.status === "open") {
          const card = (new URLSearchParams(body).get("card") ?? "").replace(/\D/g, "");
          if (card === "4000000000000002") {
            send(res, 402, checkoutPage(session, "Your card was declined."), "text/html; charset=utf-8");
            return 402;
          }
          await pay(session.id);
        }
        send(res, 303, "", "text/plain", { location: successUrl(session) });
        return 303;
      }
      send(res, 405, "Method not allowed", "text/plain", { allow: "GET, POST" });
      return 405;
    }

    if (path === "/" || path === "/healthz") {
      send(res, 200, JSON.stringify({ ok: true, fake: "stripe" }), "application/json");
      return 200;
    }

    if (!path.startsWith("/v1/")) {
      send(res, 404, "Not found", "text/plain");
      return 404;
    }
    try {
      const auth = req.headers.authorization ?? "";
      const key = auth.startsWith("Bearer ") ? auth.slice(7) : "";
      if (!key.startsWith("sk_test_")) {
        throw new ApiError(401, "invalid_request_error", key ? `Invalid API Key provided: ${key.slice(0, 8)}***` : "You did not provide an API key.");
      }
      const form = method === "GET" || method === "DELETE" ? parseStripeForm(url.search.slice(1)) : parseStripeForm(body);
      const idempotencyKey = method === "POST" ? (req.headers["idempotency-key"] as string | undefined) : undefined;
      const request = `${method} ${path} ${body}`;
      if (idempotencyKey) {
        const first = idempotent.get(idempotencyKey);
        if (first && first.request === request) {
          send(res, first.status, first.payload, "application/json", { "request-id": stripeId("req"), "idempotent-replayed": "true" });
          return first.status;
        }
      }
      let status = 200;
      let payload: string;
      try {
        payload = JSON.stringify(await api(method, path, form));
      } catch (error) {
        // Stripe keeps the answer to a key, errors included, except its own server errors.
        if (!(error instanceof ApiError) || error.status >= 500) throw error;
        status = error.status;
        payload = JSON.stringify(errorPayload(error));
      }
      if (idempotencyKey) idempotent.set(idempotencyKey, { request, status, payload });
      send(res, status, payload, "application/json", { "request-id": stripeId("req") });
      return status;
    } catch (error) {
      const e = error instanceof ApiError ? error : new ApiError(500, "api_error", error instanceof Error ? error.message : String(error));
      send(res, e.status, JSON.stringify(errorPayload(e)), "application/json", { "request-id": stripeId("req") });
      return e.status;
    }
  }

  const server = http.createServer((req, res) => {
    const started = Date.now();
    handle(req, res)
      .then((status) => log(`${req.method} ${req.url} ${status} ${Date.now() - started}ms`))
      .catch((error: unknown) => {
        log(`${req.method} ${req.url} 500 ${error instanceof Error ? error.message : String(error)}`);
        if (!res.headersSent) send(res, 500, "Internal error", "text/plain");
      });
  });
  server.keepAliveTimeout = 1000;
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  baseUrl = options.publicUrl?.replace(/\/+$/, "") || `http://${host}:${port}`;

  return {
    url: baseUrl,
    port,
    customers,
    sessions,
    paymentIntents,
    refunds,
    events,
    pay,
    expire,
    sign,
    stop: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}
