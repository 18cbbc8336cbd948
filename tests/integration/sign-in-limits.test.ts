import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

// The app reads TRUSTED_PROXIES once per process, on first use: set it before any test runs.
vi.hoisted(() => {
  vi.stubEnv("TRUSTED_PROXIES", "127.0.0.1");
});

// Counts the password checks that actually run (the real check still runs).
vi.mock("~/models/users.server", async (importOriginal) => {
  const original = await importOriginal<typeof import("~/models/users.server")>();
  return { ...original, verifyCredentials: vi.fn(original.verifyCredentials) };
});

import { createCustomerAccount, verifyCredentials } from "~/models/users.server";
import { authenticator, SignInError } from "~/services/auth.server";
import { db } from "~/services/db.server";
import { clientAddress, networkOf, UNKNOWN_CLIENT, withPeerAddress } from "~/services/sign-in-limits.server";
import { resetDatabase } from "./reset-database";

const ROBIN = { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" };

afterAll(async () => {
  vi.unstubAllEnvs();
  await db.destroy();
});
beforeEach(async () => {
  await resetDatabase(db);
  vi.mocked(verifyCredentials).mockClear();
});
afterEach(() => {
  vi.useRealTimers();
});

function signInRequest(email: string, password: string, headers: Record<string, string> = {}) {
  return new Request("http://127.0.0.1/sign-in", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded", ...headers },
    body: new URLSearchParams({ email, password }),
  });
}

type Outcome = { signedIn: true } | { signedIn: false; field: string; message: string };

/** A sign-in through the app's authenticator, as if sent from `peer` over the socket. */
async function signInFrom(peer: string, email: string, password: string): Promise<Outcome> {
  try {
    await withPeerAddress(peer, () => authenticator.authenticate("form", signInRequest(email, password)));
    return { signedIn: true };
  } catch (error) {
    if (!(error instanceof SignInError)) throw error;
    return { signedIn: false, field: error.field, message: error.message };
  }
}

const checks = () => vi.mocked(verifyCredentials).mock.calls.length;

describe("password tries counted before the check", () => {
  it("lets at most 5 of 8 wrong tries sent at once reach the password check, and refuses the rest", async () => {
    await createCustomerAccount(db, ROBIN);
    const outcomes = await Promise.all(Array.from({ length: 8 }, (_, i) => signInFrom("198.51.100.7", ROBIN.email, `wrong guess ${i}`)));
    expect(checks()).toBeGreaterThanOrEqual(1);
    expect(checks()).toBeLessThanOrEqual(5);
    const wrong = outcomes.filter((o) => !o.signedIn && o.field === "password");
    const refused = outcomes.filter((o) => !o.signedIn && o.field === "form");
    expect(wrong).toHaveLength(checks());
    expect(refused).toHaveLength(8 - checks());
    for (const o of refused) expect(o).toMatchObject({ message: expect.stringMatching(/^Too many failed sign-ins\. Try again in \d+ seconds?/) });
  });

  it("does not let parallel tries from many addresses past the e-mail's count either", async () => {
    await createCustomerAccount(db, ROBIN);
    // First the e-mail's free failures from all networks (10), spread over addresses.
    for (let i = 0; i < 10; i++) expect(await signInFrom(`192.0.2.${i + 1}`, ROBIN.email, `guess ${i}`)).toMatchObject({ field: "password" });
    vi.mocked(verifyCredentials).mockClear();
    // The wait after the tenth failure has begun: none of these may reach the check.
    const outcomes = await Promise.all(Array.from({ length: 8 }, (_, i) => signInFrom(`192.0.2.${100 + i}`, ROBIN.email, `more ${i}`)));
    expect(checks()).toBe(0);
    for (const o of outcomes) expect(o).toMatchObject({ field: "form" });
  });
});

describe("slowing down instead of locking out", () => {
  it("makes each try after five failures wait 1 s, then 2, 4 … up to 5 minutes, and lets the right password in after the wait", async () => {
    vi.useFakeTimers({ toFake: ["Date"], now: new Date("2027-03-01T09:00:00Z") });
    await createCustomerAccount(db, ROBIN);
    const peer = "203.0.113.20";
    for (let i = 0; i < 5; i++) expect(await signInFrom(peer, ROBIN.email, `guess ${i}`)).toMatchObject({ field: "password" });

    const waits: string[] = [];
    for (let failure = 5; failure < 16; failure++) {
      const refused = await signInFrom(peer, ROBIN.email, ROBIN.password);
      expect(refused).toMatchObject({ field: "form" });
      const wait = /Try again in (\d+) (second|minute)s?, or use “Forgot your password\?” below\./.exec((refused as { message: string }).message);
      expect(wait, (refused as { message: string }).message).not.toBeNull();
      waits.push(`${wait![1]} ${wait![2]}`);
      // Once the wait is over, a try is checked again.
      vi.setSystemTime(Date.now() + Number(wait![1]) * (wait![2] === "minute" ? 60_000 : 1000));
      expect(await signInFrom(peer, ROBIN.email, `guess ${failure}`)).toMatchObject({ field: "password" });
    }
    // 1, 2, 4 … seconds; 64 s reads as 2 minutes; never more than 5 minutes.
    expect(waits).toEqual(["1 second", "2 second", "4 second", "8 second", "16 second", "32 second", "2 minute", "3 minute", "5 minute", "5 minute", "5 minute"]);

    vi.setSystemTime(Date.now() + 5 * 60_000);
    expect(await signInFrom(peer, ROBIN.email, ROBIN.password)).toEqual({ signedIn: true });
    // The success forgets the failures: the next wrong tries are checked at once.
    for (let i = 0; i < 4; i++) expect(await signInFrom(peer, ROBIN.email, `again ${i}`)).toMatchObject({ field: "password" });
  });

  it("still lets the owner in from another address while one address is being slowed down", async () => {
    await createCustomerAccount(db, ROBIN);
    for (let i = 0; i < 5; i++) expect(await signInFrom("198.51.100.66", ROBIN.email, `guess ${i}`)).toMatchObject({ field: "password" });
    expect(await signInFrom("198.51.100.66", ROBIN.email, ROBIN.password)).toMatchObject({ field: "form" });
    expect(await signInFrom("203.0.113.5", ROBIN.email, ROBIN.password)).toEqual({ signedIn: true });
  });

  it("counts an IPv6 client by its /64, so hopping addresses inside it gains nothing", async () => {
    expect(networkOf("2001:db8:1:2::1")).toBe("2001:db8:1:2::/64");
    expect(networkOf("2001:0db8:0001:0002:ffff:0:0:9")).toBe("2001:db8:1:2::/64");
    expect(networkOf("::1")).toBe("0:0:0:0::/64");
    expect(networkOf("203.0.113.5")).toBe("203.0.113.5");
    await createCustomerAccount(db, ROBIN);
    for (let i = 0; i < 5; i++) expect(await signInFrom(`2001:db8:1:2::${i + 1}`, ROBIN.email, `guess ${i}`)).toMatchObject({ field: "password" });
    expect(await signInFrom("2001:db8:1:2::99", ROBIN.email, ROBIN.password)).toMatchObject({ field: "form" });
  });
});

describe("the client address", () => {
  const trusted = [
    { address: "10.0.0.0", prefix: 8, family: "ipv4" as const },
    { address: "127.0.0.1", prefix: 32, family: "ipv4" as const },
  ];
  const forwarded = (value: string) => signInRequest("a@example.test", "x", { "X-Forwarded-For": value });

  it("is the socket's peer, and X-Forwarded-For counts only when that peer is a trusted proxy", () => {
    expect(clientAddress(forwarded("198.51.100.1"), { peer: "203.0.113.9", trustedProxies: trusted })).toBe("203.0.113.9");
    expect(clientAddress(forwarded("198.51.100.1"), { peer: "10.1.2.3", trustedProxies: trusted })).toBe("198.51.100.1");
    expect(clientAddress(forwarded("198.51.100.1"), { peer: "::ffff:127.0.0.1", trustedProxies: trusted })).toBe("198.51.100.1");
    expect(clientAddress(signInRequest("a@example.test", "x"), { peer: "10.1.2.3", trustedProxies: trusted })).toBe("10.1.2.3");
    expect(clientAddress(forwarded("198.51.100.1"), { peer: "10.1.2.3", trustedProxies: [] })).toBe("10.1.2.3");
  });

  it("reads X-Forwarded-For from the right, past our own proxies only, so a client cannot put a name in front", () => {
    // The client wrote "1.1.1.1"; our proxy appended the address it saw (198.51.100.1).
    expect(clientAddress(forwarded("1.1.1.1, 198.51.100.1"), { peer: "10.0.0.2", trustedProxies: trusted })).toBe("198.51.100.1");
    // Two of our proxies in a row.
    expect(clientAddress(forwarded("1.1.1.1, 198.51.100.1, 10.0.0.3"), { peer: "10.0.0.2", trustedProxies: trusted })).toBe("198.51.100.1");
    // Garbage written by the client is not believed.
    expect(clientAddress(forwarded("not-an-address, 198.51.100.1"), { peer: "10.0.0.2", trustedProxies: trusted })).toBe("198.51.100.1");
    expect(clientAddress(forwarded("198.51.100.1, not-an-address"), { peer: "10.0.0.2", trustedProxies: trusted })).toBe("10.0.0.2");
  });

  it("is unknown, whatever the headers say, when no socket stands behind the request", () => {
    expect(clientAddress(forwarded("198.51.100.1"))).toBe(UNKNOWN_CLIENT);
  });

  describe("over a real socket", () => {
    let server: http.Server;
    let port = 0;

    beforeAll(async () => {
      // A plain node:http server standing in for react-router-serve: it builds a Fetch
      // Request from the headers and body only, as @react-router/express does.
      server = http.createServer(async (req, res) => {
        const chunks: Buffer[] = [];
        for await (const chunk of req) chunks.push(chunk as Buffer);
        const headers = new Headers();
        for (const [name, value] of Object.entries(req.headers)) if (typeof value === "string") headers.set(name, value);
        const request = new Request(`http://127.0.0.1${req.url}`, { method: req.method, headers, body: Buffer.concat(chunks) });
        const address = clientAddress(request);
        let outcome: Outcome;
        try {
          await authenticator.authenticate("form", request);
          outcome = { signedIn: true };
        } catch (error) {
          if (!(error instanceof SignInError)) throw error;
          outcome = { signedIn: false, field: error.field, message: error.message };
        }
        res.setHeader("Content-Type", "application/json");
        res.end(JSON.stringify({ address, outcome }));
      });
      await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
      port = (server.address() as AddressInfo).port;
    });
    afterAll(() => new Promise<void>((resolve) => server.close(() => resolve())));

    /** POSTs a sign-in from local address `from` (loopback: 127.0.0.1 is the trusted proxy, 127.0.0.2 is not). */
    function post(from: string, email: string, password: string, forwardedFor?: string): Promise<{ address: string; outcome: Outcome }> {
      const body = new URLSearchParams({ email, password }).toString();
      return new Promise((resolve, reject) => {
        const request = http.request(
          {
            host: "127.0.0.1",
            port,
            localAddress: from,
            method: "POST",
            path: "/sign-in",
            agent: false,
            headers: {
              "Content-Type": "application/x-www-form-urlencoded",
              "Content-Length": Buffer.byteLength(body),
              ...(forwardedFor ? { "X-Forwarded-For": forwardedFor } : {}),
            },
          },
          (response) => {
            let text = "";
            response.setEncoding("utf8");
            response.on("data", (chunk: string) => (text += chunk));
            response.on("end", () => resolve(JSON.parse(text)));
          },
        );
        request.on("error", reject);
        request.end(body);
      });
    }

    it("keys a client that forges X-Forwarded-For by its own address", async () => {
      const first = await post("127.0.0.2", "nobody@example.test", "x", "198.51.100.1");
      expect(first.address).toBe("127.0.0.2");
      // Twenty failures on as many e-mails, each naming another client: all from one network.
      for (let i = 1; i < 20; i++) expect((await post("127.0.0.2", `guess${i}@example.test`, "nope", `198.51.100.${i + 1}`)).outcome).toMatchObject({ field: "password" });
      const refused = await post("127.0.0.2", "another@example.test", "nope", "198.51.100.200");
      expect(refused.address).toBe("127.0.0.2");
      expect(refused.outcome).toMatchObject({ field: "form", message: expect.stringMatching(/from your network\. Try again in 15 minutes/) });
    });

    it("honours X-Forwarded-For from the trusted proxy", async () => {
      await createCustomerAccount(db, ROBIN);
      expect((await post("127.0.0.1", ROBIN.email, "nope")).address).toBe("127.0.0.1");
      for (let i = 0; i < 5; i++) {
        const reply = await post("127.0.0.1", ROBIN.email, `guess ${i}`, `1.1.1.1, 198.51.100.30`);
        expect(reply.address).toBe("198.51.100.30");
        expect(reply.outcome).toMatchObject({ field: "password" });
      }
      expect((await post("127.0.0.1", ROBIN.email, ROBIN.password, "198.51.100.30")).outcome).toMatchObject({ field: "form" });
      // Another client behind the same proxy is another key.
      const other = await post("127.0.0.1", ROBIN.email, ROBIN.password, "198.51.100.31");
      expect(other).toEqual({ address: "198.51.100.31", outcome: { signedIn: true } });
    });
  });
});
