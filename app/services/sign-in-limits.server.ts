import { RateLimiterPostgres, RateLimiterRes } from "rate-limiter-flexible";
import { db } from "./db.server";

// Repeated failed sign-ins are refused for a while: 5 failures for one e-mail in
// 15 minutes, or 20 from one address, block further tries for 15 minutes.
const EMAIL_FAILURES = 5;
const ADDRESS_FAILURES = 20;
const WINDOW_SECONDS = 15 * 60;

function limiter(keyPrefix: string, points: number): Promise<RateLimiterPostgres> {
  return new Promise((resolve, reject) => {
    const created: RateLimiterPostgres = new RateLimiterPostgres(
      {
        storeClient: db,
        storeType: "knex",
        tableName: "sign_in_failures",
        keyPrefix,
        points,
        duration: WINDOW_SECONDS,
        blockDuration: WINDOW_SECONDS,
        clearExpiredByTimeout: false,
      },
      (error?: Error) => (error ? reject(error) : resolve(created)),
    );
  });
}

let limiters: Promise<{ email: RateLimiterPostgres; address: RateLimiterPostgres }> | undefined;
function getLimiters() {
  limiters ??= Promise.all([limiter("email", EMAIL_FAILURES), limiter("address", ADDRESS_FAILURES)]).then(
    ([email, address]) => ({ email, address }),
  );
  return limiters;
}

export function clientAddress(request: Request) {
  return request.headers.get("x-forwarded-for")?.split(",")[0]?.trim() || "direct";
}

/** Minutes until sign-in is allowed again, or 0 when it is allowed now. */
export async function signInBlockedMinutes(email: string, address: string): Promise<number> {
  const { email: byEmail, address: byAddress } = await getLimiters();
  const [a, b] = await Promise.all([byEmail.get(email), byAddress.get(address)]);
  const blocked = [a && a.consumedPoints >= EMAIL_FAILURES ? a : null, b && b.consumedPoints >= ADDRESS_FAILURES ? b : null]
    .filter((r): r is RateLimiterRes => r !== null)
    .map((r) => r.msBeforeNext);
  return blocked.length ? Math.ceil(Math.max(...blocked) / 60_000) : 0;
}

export async function recordFailedSignIn(email: string, address: string) {
  const { email: byEmail, address: byAddress } = await getLimiters();
  // consume() rejects with a RateLimiterRes once the limit is passed; that is expected here.
  const count = (p: Promise<unknown>) => p.catch((r) => (r instanceof RateLimiterRes ? r : Promise.reject(r)));
  await Promise.all([count(byEmail.consume(email)), count(byAddress.consume(address))]);
}

export async function clearFailedSignIns(email: string) {
  const { email: byEmail } = await getLimiters();
  await byEmail.delete(email);
}
