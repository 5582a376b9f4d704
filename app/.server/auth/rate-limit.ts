import { RateLimiterMemory } from "rate-limiter-flexible";

/**
 * Failed sign-ins are counted per account (e-mail) and per client address. Five failures for one
 * account in 15 minutes (twenty for one address) are free; the next failure blocks further tries
 * for 15 minutes (5 for the address). Kept in memory: one server process serves a lab, and a restart forgiving the count
 * is acceptable (see Decisions).
 */
const limits = {
  email: { points: 5, limiter: new RateLimiterMemory({ keyPrefix: "signin_email", points: 5, duration: 15 * 60, blockDuration: 15 * 60 }) },
  address: { points: 20, limiter: new RateLimiterMemory({ keyPrefix: "signin_ip", points: 20, duration: 15 * 60, blockDuration: 5 * 60 }) },
};

export interface Throttle {
  blocked: boolean;
  retryAfterSeconds: number;
}

export async function checkSignInThrottle(email: string, address: string): Promise<Throttle> {
  const results = await Promise.all([
    limits.email.limiter.get(email).then((r) => ({ r, points: limits.email.points })),
    limits.address.limiter.get(address).then((r) => ({ r, points: limits.address.points })),
  ]);
  const waits = results
    .filter(({ r, points }) => r !== null && r.consumedPoints > points)
    .map(({ r }) => Math.ceil((r?.msBeforeNext ?? 0) / 1000));
  const retryAfterSeconds = Math.max(0, ...waits);
  return { blocked: retryAfterSeconds > 0, retryAfterSeconds };
}

export async function recordSignInFailure(email: string, address: string) {
  // consume() rejects once the limit is passed; that rejection is the block, not an error.
  await Promise.allSettled([limits.email.limiter.consume(email), limits.address.limiter.consume(address)]);
}

export async function clearSignInFailures(email: string) {
  await limits.email.limiter.delete(email);
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
