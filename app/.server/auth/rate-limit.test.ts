import { describe, expect, it } from "vitest";
import { checkSignInThrottle, clearSignInFailures, clientAddressOf, currentPasswordThrottle, recordSignInFailure, throttleMessage } from "./rate-limit";

describe("sign-in throttling (OWASP ASVS 4.0.3 V2.2.1)", () => {
  it("lets four failures through and blocks the account for 15 minutes from its fifth failure in 15 minutes", async () => {
    const email = `victim-${Math.random()}@tankside.example`;
    for (let i = 0; i < 4; i++) {
      await recordSignInFailure(email, `198.51.100.${i}`);
      expect((await checkSignInThrottle(email, `198.51.100.${i + 1}`)).blocked).toBe(false);
    }
    await recordSignInFailure(email, "198.51.100.9");
    const t = await checkSignInThrottle(email, "198.51.100.10");
    expect(t.blocked).toBe(true);
    // 15 min = 900 s, less the few milliseconds the test took.
    expect(t.retryAfterSeconds).toBeGreaterThan(890);
    expect(t.retryAfterSeconds).toBeLessThanOrEqual(900);
    expect(throttleMessage(t)).toBe("Too many failed attempts. Wait 15 minutes and try again.");
  });

  it("forgets the failures after a successful sign-in", async () => {
    const email = `forgiven-${Math.random()}@tankside.example`;
    for (let i = 0; i < 4; i++) await recordSignInFailure(email, "198.51.100.20");
    await clearSignInFailures(email);
    await recordSignInFailure(email, "198.51.100.20");
    expect((await checkSignInThrottle(email, "198.51.100.21")).blocked).toBe(false);
  });

  it("blocks an address for 5 minutes at its 20th failure, whatever the accounts; another address is not blocked", async () => {
    for (let i = 0; i < 19; i++) await recordSignInFailure(`stranger-${i}-${Math.random()}@x.example`, "203.0.113.66");
    expect((await checkSignInThrottle("someone@x.example", "203.0.113.66")).blocked).toBe(false);
    await recordSignInFailure(`stranger-last-${Math.random()}@x.example`, "203.0.113.66");
    const t = await checkSignInThrottle("someone@x.example", "203.0.113.66");
    expect(t.blocked).toBe(true);
    expect(t.retryAfterSeconds).toBeGreaterThan(290);
    expect(t.retryAfterSeconds).toBeLessThanOrEqual(300);
    expect((await checkSignInThrottle("manager@tankside.example", "192.0.2.1")).blocked).toBe(false);
  });

  it("throttles wrong current passwords per account with the sign-in numbers", () => {
    expect([currentPasswordThrottle.failures, currentPasswordThrottle.windowSeconds, currentPasswordThrottle.blockSeconds]).toEqual([5, 900, 900]);
  });

  it("takes the address from the server's load context, not from X-Forwarded-For", () => {
    expect(clientAddressOf({ clientAddress: "192.0.2.1" })).toBe("192.0.2.1");
    expect(clientAddressOf({})).toBe("unknown");
    expect(clientAddressOf(undefined)).toBe("unknown");
  });
});
