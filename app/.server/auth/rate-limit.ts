import { RateLimiterMemory } from "rate-limiter-flexible";

export interface Throttle {
  blocked: boolean;
  retryAfterSeconds: number;
}

/**
 * Counts failures per key: the `failures`-th failure inside `windowSeconds` blocks the key for
 * `blockSeconds`, counted from that failure. Kept in memory: one server process serves a lab, and a
 * restart forgiving the count is acceptable (see Decisions).
 */
export class FailureThrottle {
  private readonly limiter: RateLimiterMemory;
  constructor(
    keyPrefix: string,
    readonly failures: number,
    readonly windowSeconds: number,
    readonly blockSeconds: number,
  ) {
    // The limiter blocks on the consume that goes past `points`, which makes it the failures-th.
    this.limiter = new RateLimiterMemory({ keyPrefix, points: failures - 1, duration: windowSeconds, blockDuration: blockSeconds });
  }

  async check(key: string): Promise<Throttle> {
    const r = await this.limiter.get(key);
    if (!r || r.consumedPoints < this.failures) return { blocked: false, retryAfterSeconds: 0 };
    const retryAfterSeconds = Math.max(1, Math.ceil(r.msBeforeNext / 1000));
    return { blocked: true, retryAfterSeconds };
  }

  async record(key: string) {
    // consume() rejects once the limit is passed; that rejection is the block, not an error.
    await this.limiter.consume(key).catch(() => undefined);
  }

  async clear(key: string) {
    await this.limiter.delete(key);
  }
}

/**
 * Failed sign-ins, per account (e-mail) and per client address (OWASP ASVS 4.0.3 V2.2.1): the 5th
 * failure for one account within 15 minutes blocks it for 15 minutes; the 20th from one address
 * within 15 minutes blocks that address for 5 minutes.
 */
export const signInThrottles = {
  account: new FailureThrottle("signin_email", 5, 15 * 60, 15 * 60),
  address: new FailureThrottle("signin_ip", 20, 15 * 60, 5 * 60),
};

/**
 * Wrong current passwords when changing the password on the account page: the same numbers as
 * sign-in, per account, so a borrowed session cannot guess the password at leisure (OWASP ASVS 4.0.3
 * V2.2.1).
 */
export const currentPasswordThrottle = new FailureThrottle("current_password", 5, 15 * 60, 15 * 60);

export async function checkSignInThrottle(email: string, address: string): Promise<Throttle> {
  const results = await Promise.all([signInThrottles.account.check(email), signInThrottles.address.check(address)]);
  const retryAfterSeconds = Math.max(0, ...results.map((r) => r.retryAfterSeconds));
  return { blocked: results.some((r) => r.blocked), retryAfterSeconds };
}

export async function recordSignInFailure(email: string, address: string) {
  await Promise.all([signInThrottles.account.record(email), signInThrottles.address.record(address)]);
}

export async function clearSignInFailures(email: string) {
  await signInThrottles.account.clear(email);
}

/**
 * A route's `headers` export for throttled actions. React Router passes only Set-Cookie from an
 * action's data() to the response unless the route says otherwise, so the blocked answer's
 * Retry-After never reached the client; this keeps the parent's headers and adds that one.
 */
export function keepRetryAfter({ parentHeaders, actionHeaders }: { parentHeaders: Headers; actionHeaders: Headers }) {
  const out = new Headers(parentHeaders);
  const wait = actionHeaders.get("Retry-After");
  if (wait) out.set("Retry-After", wait);
  return out;
}

/** The blocked answer's message: whole minutes, rounded up, as a person reads a clock. */
export function throttleMessage(t: Throttle) {
  const minutes = Math.ceil(t.retryAfterSeconds / 60);
  return `Too many failed attempts. Wait ${minutes} minute${minutes === 1 ? "" : "s"} and try again.`;
}

/**
 * The client's address as the HTTP server saw it (server.mjs puts req.ip in the load context, which
 * follows X-Forwarded-For only when TRUST_PROXY is set). Request headers are never read here: anyone
 * can send X-Forwarded-For.
 */
export function clientAddressOf(context: unknown): string {
  const value = (context as { clientAddress?: unknown } | null | undefined)?.clientAddress;
  return typeof value === "string" && value ? value : "unknown";
}
