import { AsyncLocalStorage } from "node:async_hooks";
import { createHash } from "node:crypto";
import { subscribe } from "node:diagnostics_channel";
import { BlockList, isIP } from "node:net";
import { RateLimiterPostgres, RateLimiterRes } from "rate-limiter-flexible";
import { db } from "./db.server";
import { serverEnv, type ProxyRange } from "./env.server";

// Limits on guessing passwords, kept in PostgreSQL (rate-limiter-flexible, table
// sign_in_failures) so every app process sees the same counts.
//
// - Failures of one e-mail from one network, and of one e-mail from every network, slow the
//   next try down instead of locking the account: after 5 (10 from all networks) the next try
//   waits 1 second after the last failure, then 2, 4, 8 … up to 5 minutes. Whoever knows the
//   password gets in as soon as the wait is over, from any network, and an attacker cannot
//   shut the owner out for longer than one wait. A success forgets the e-mail's failures.
// - One network failing on many e-mails (20 in 15 minutes) is refused for 15 minutes.
// - A try takes its points BEFORE the password is checked (consume() is one atomic upsert),
//   so tries sent in parallel each count; from the last free try on, one try per e-mail is
//   checked at a time. A success gives the points back.
// Keys are hashes: the table holds no e-mail or IP address in clear.

// ---------------------------------------------------------------------------------------
// The client's address.
//
// react-router-serve (@react-router/express), like the Vite dev server, hands the app a Fetch
// Request built from the URL, method, headers and body only, and passes no load context: the
// socket's address is not reachable from a loader or action. Node's HTTP server announces
// every request on the "http.server.request.start" diagnostics channel, with its socket,
// synchronously before any handler runs; the subscriber below keeps that socket's address
// for the rest of the request's async work (AsyncLocalStorage). It works under any server
// built on node:http, and is installed when this module is imported, i.e. when the server
// build loads, before the server listens. X-Forwarded-For counts only when that peer is one
// of TRUSTED_PROXIES (app/services/env.server.ts).

type PeerStore = { address: string | undefined };
const globalForPeers = globalThis as unknown as { __varroutePeers?: AsyncLocalStorage<PeerStore> };

function peerStorage(): AsyncLocalStorage<PeerStore> {
  // One subscriber per process, even when dev reloads import this module again.
  if (globalForPeers.__varroutePeers) return globalForPeers.__varroutePeers;
  const storage = new AsyncLocalStorage<PeerStore>();
  subscribe("http.server.request.start", (message) => {
    const socket = (message as { socket?: { remoteAddress?: string } }).socket;
    storage.enterWith({ address: socket?.remoteAddress });
  });
  globalForPeers.__varroutePeers = storage;
  return storage;
}

const peers = peerStorage();

/** The key used when the peer is unknown (a request not received by node:http, e.g. made in a test). */
export const UNKNOWN_CLIENT = "unknown";

/**
 * Runs `fn` as a request whose TCP peer is `address`: for a server that knows the peer some
 * other way (e.g. a custom server's `req.socket.remoteAddress`), and for tests.
 */
export function withPeerAddress<T>(address: string, fn: () => T): T {
  return peers.run({ address }, fn);
}

/** An address as the limits key it: IPv4-mapped IPv6 as IPv4, no port, zone or brackets; null when not an IP address. */
function normaliseAddress(value: string | null | undefined): string | null {
  if (!value) return null;
  let address = value.trim();
  const bracketed = /^\[([^\]]+)\](?::\d+)?$/.exec(address);
  if (bracketed) address = bracketed[1];
  else if (/^\d{1,3}(?:\.\d{1,3}){3}:\d+$/.test(address)) address = address.slice(0, address.lastIndexOf(":"));
  address = address.replace(/%.*$/, "");
  const mapped = /^::ffff:(\d{1,3}(?:\.\d{1,3}){3})$/i.exec(address);
  if (mapped) address = mapped[1];
  const version = isIP(address);
  if (version === 0) return null;
  return version === 6 ? address.toLowerCase() : address;
}

const trustLists = new WeakMap<readonly ProxyRange[], BlockList>();

function trustList(ranges: readonly ProxyRange[]): BlockList {
  let list = trustLists.get(ranges);
  if (!list) {
    list = new BlockList();
    for (const range of ranges) list.addSubnet(range.address, range.prefix, range.family);
    trustLists.set(ranges, list);
  }
  return list;
}

function isTrusted(list: BlockList, address: string): boolean {
  return list.check(address, isIP(address) === 6 ? "ipv6" : "ipv4");
}

/**
 * The address of the client that sent `request`: the TCP peer, or, when the peer is a
 * trusted proxy, the nearest address in X-Forwarded-For that is not a trusted proxy (read
 * from the right: each proxy appends the address it received the request from, and only
 * the part written by our own proxies can be believed). UNKNOWN_CLIENT when the peer is not
 * known. `peer` and `trustedProxies` default to the socket's address and TRUSTED_PROXIES.
 */
export function clientAddress(request: Request, options: { peer?: string; trustedProxies?: readonly ProxyRange[] } = {}): string {
  const peer = normaliseAddress(options.peer ?? peers.getStore()?.address);
  if (!peer) return UNKNOWN_CLIENT;
  const trusted = trustList(options.trustedProxies ?? serverEnv().TRUSTED_PROXIES);
  let client = peer;
  if (!isTrusted(trusted, client)) return client;
  const hops = (request.headers.get("x-forwarded-for") ?? "").split(",");
  for (let i = hops.length - 1; i >= 0; i--) {
    const hop = normaliseAddress(hops[i]);
    // An entry that is no address: believe nothing further left of it.
    if (!hop) break;
    client = hop;
    if (!isTrusted(trusted, hop)) break;
  }
  return client;
}

/** The groups of an IPv6 address, "::" expanded; an embedded IPv4 tail counts as two. */
function ipv6Groups(address: string): string[] {
  const groups = (part: string) => (part ? part.split(":").flatMap((g) => (g.includes(".") ? ["0", "0"] : [g])) : []);
  const [head, tail] = address.split("::");
  if (tail === undefined) return groups(head);
  const left = groups(head);
  const right = groups(tail);
  return [...left, ...Array<string>(Math.max(0, 8 - left.length - right.length)).fill("0"), ...right];
}

/** The network an address belongs to for the limits: an IPv4 address, or an IPv6 /64 (a site gets a whole /64). */
export function networkOf(address: string): string {
  if (isIP(address) !== 6) return address;
  return `${ipv6Groups(address)
    .slice(0, 4)
    .map((g) => parseInt(g, 16).toString(16))
    .join(":")}::/64`;
}

// ---------------------------------------------------------------------------------------
// The limits.

/** Failures of one e-mail from one network before tries are slowed down. */
const FREE_FAILURES_PER_NETWORK = 5;
/** Failures of one e-mail from all networks together before tries are slowed down. */
const FREE_FAILURES_PER_EMAIL = 10;
const FIRST_WAIT_SECONDS = 1;
const LONGEST_WAIT_SECONDS = 5 * 60;
/** Failures are forgotten a day after the first one. */
const FAILURE_MEMORY_SECONDS = 24 * 60 * 60;
/** Failures from one network over all e-mails before it is refused, and for how long. */
const NETWORK_FAILURES = 20;
const NETWORK_WINDOW_SECONDS = 15 * 60;
/** How long one check may hold an e-mail's turn; a check that never ends (a crash) frees it then. */
const TURN_SECONDS = 30;
/** The gate's points while waiting after a failure; a check in progress holds 1. */
const WAITING = 1_000;

/** Seconds to wait after `failures` failures when `free` are allowed without waiting. */
function waitAfterFailures(failures: number, free: number): number {
  if (failures < free) return 0;
  return Math.min(LONGEST_WAIT_SECONDS, FIRST_WAIT_SECONDS * 2 ** (failures - free));
}

/** A try refused before the password was checked; waitMs says when the next one may come. */
export class SignInTooSoon extends Error {
  constructor(
    readonly waitMs: number,
    /** "account": the e-mail's tries are slowed down; "network": the client's network failed on too many e-mails. */
    readonly reason: "account" | "network",
  ) {
    super(`sign-in refused for ${Math.ceil(waitMs / 1000)} s (${reason})`);
    this.name = "SignInTooSoon";
  }
}

/** "1 second", "40 seconds", "3 minutes": a wait as a person reads it, rounded up. */
export function waitText(waitMs: number): string {
  const seconds = Math.max(1, Math.ceil(waitMs / 1000));
  if (seconds < 60) return `${seconds} second${seconds === 1 ? "" : "s"}`;
  const minutes = Math.ceil(seconds / 60);
  return `${minutes} minute${minutes === 1 ? "" : "s"}`;
}

type Limiters = {
  /** Failures (and tries being checked) per e-mail and network, and per e-mail. */
  failures: RateLimiterPostgres;
  /** Per e-mail and network, and per e-mail, once past the free failures: one check at a time, and the wait. */
  gates: RateLimiterPostgres;
  /** Failures per network over all e-mails. */
  networks: RateLimiterPostgres;
};

const TABLE = "sign_in_failures";

function limiter(options: { keyPrefix: string; points: number; duration: number; blockDuration?: number }, first: boolean): Promise<RateLimiterPostgres> {
  const settings = {
    storeClient: db,
    storeType: "knex",
    tableName: TABLE,
    ...options,
    // The first limiter creates the table and sweeps expired rows of every limiter.
    tableCreated: !first,
    clearExpiredByTimeout: first,
  };
  if (!first) return Promise.resolve(new RateLimiterPostgres(settings));
  return new Promise((resolve, reject) => {
    const created: RateLimiterPostgres = new RateLimiterPostgres(settings, (error?: Error) => (error ? reject(error) : resolve(created)));
  });
}

let limiters: Promise<Limiters> | undefined;

function getLimiters(): Promise<Limiters> {
  limiters ??= (async () => {
    // One after the other: two CREATE TABLE IF NOT EXISTS at once can collide in PostgreSQL.
    const failures = await limiter({ keyPrefix: "failures", points: 1_000_000, duration: FAILURE_MEMORY_SECONDS }, true);
    const gates = await limiter({ keyPrefix: "gate", points: 1, duration: TURN_SECONDS }, false);
    const networks = await limiter({ keyPrefix: "network", points: NETWORK_FAILURES, duration: NETWORK_WINDOW_SECONDS, blockDuration: NETWORK_WINDOW_SECONDS }, false);
    return { failures, gates, networks };
  })().catch((error) => {
    limiters = undefined;
    throw error;
  });
  return limiters;
}

function digest(text: string): string {
  return createHash("sha256").update(text).digest("hex").slice(0, 32);
}

type Scope = { key: string; free: number };

function scopesOf(email: string, network: string): Scope[] {
  const e = digest(email);
  return [
    { key: `pair:${e}:${digest(network)}`, free: FREE_FAILURES_PER_NETWORK },
    { key: `email:${e}`, free: FREE_FAILURES_PER_EMAIL },
  ];
}

/** consume(), with a refusal as a result instead of a rejection. */
async function take(limiter: RateLimiterPostgres, key: string): Promise<{ taken: boolean; res: RateLimiterRes }> {
  try {
    return { taken: true, res: await limiter.consume(key) };
  } catch (refusal) {
    if (refusal instanceof RateLimiterRes) return { taken: false, res: refusal };
    throw refusal;
  }
}

/** A try whose points are taken; say how the password check ended. */
export type SignInTry = {
  /** The password was right: the e-mail's failures are forgotten and the network's point given back. */
  succeeded(): Promise<void>;
  /** The password was wrong: the points stay, and the next try may have to wait. */
  failed(): Promise<void>;
  /** The check did not happen (an error): every point is given back. */
  abandoned(): Promise<void>;
};

/**
 * Takes the points of one password try for `email` from `address`, before the password is
 * checked. Throws SignInTooSoon, having taken nothing, when the try must wait.
 */
export async function startSignInTry(email: string, address: string): Promise<SignInTry> {
  const { failures, gates, networks } = await getLimiters();
  const network = networkOf(address);
  const byNetwork = await take(networks, network);
  if (!byNetwork.taken) throw new SignInTooSoon(byNetwork.res.msBeforeNext, "network");

  const scopes = scopesOf(email, network);
  const counted: Scope[] = [];
  const held: { scope: Scope; failures: number }[] = [];
  const giveBack = () =>
    Promise.all([
      networks.reward(network, 1),
      ...counted.map((scope) => failures.reward(scope.key, 1)),
      ...held.map(({ scope }) => gates.delete(scope.key)),
    ]).then(() => undefined);

  try {
    const counts = await Promise.all(scopes.map((scope) => failures.consume(scope.key)));
    counted.push(...scopes);
    // From the last free try on: one check at a time, and none before the wait is over.
    const gated = scopes.map((scope, i) => ({ scope, failures: counts[i].consumedPoints })).filter((s) => s.failures >= s.scope.free);
    const turns = await Promise.all(gated.map((s) => take(gates, s.scope.key)));
    turns.forEach((turn, i) => turn.taken && held.push(gated[i]));
    const refused = turns.filter((turn) => !turn.taken);
    if (refused.length > 0) {
      // Past WAITING: the wait after a failure; below: another check in progress, over in a moment.
      const waitMs = Math.max(...refused.map((turn) => (turn.res.consumedPoints > WAITING ? turn.res.msBeforeNext : 1000)));
      throw new SignInTooSoon(waitMs, "account");
    }
  } catch (error) {
    await giveBack();
    throw error;
  }

  return {
    async succeeded() {
      await Promise.all([
        networks.reward(network, 1),
        ...scopes.map((scope) => failures.delete(scope.key)),
        ...held.map(({ scope }) => gates.delete(scope.key)),
      ]);
    },
    async failed() {
      // Only a try that holds a gate is past the free failures; its failure starts the wait.
      await Promise.all(held.map((s) => gates.set(s.scope.key, WAITING, waitAfterFailures(s.failures, s.scope.free))));
    },
    abandoned: giveBack,
  };
}

/**
 * Checks a password within the limits: takes the try's points, runs `check` (its result, or
 * null when the password is wrong), and records the outcome. Throws SignInTooSoon without
 * calling `check` when the try must wait.
 */
export async function checkPasswordWithinLimits<T>(email: string, address: string, check: () => Promise<T | null>): Promise<T | null> {
  const attempt = await startSignInTry(email, address);
  let result: T | null;
  try {
    result = await check();
  } catch (error) {
    await attempt.abandoned();
    throw error;
  }
  await (result === null ? attempt.failed() : attempt.succeeded());
  return result;
}

/** Forgets every failure recorded for `email` (e.g. once its account is deleted). */
export async function forgetSignInFailures(email: string): Promise<void> {
  await getLimiters();
  const e = digest(email);
  // rate-limiter-flexible stores "<keyPrefix>:<key>"; the per-network keys of an e-mail share a prefix.
  await db(TABLE)
    .where("key", "like", `%:pair:${e}:%`)
    .orWhere("key", "like", `%:email:${e}`)
    .delete();
}
