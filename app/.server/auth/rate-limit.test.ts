import { describe, expect, it } from "vitest";
import { checkSignInThrottle, clientAddressOf, recordSignInFailure } from "./rate-limit";

describe("sign-in throttling", () => {
  it("blocks an account for 15 minutes after its sixth failure in 15 minutes", async () => {
    const email = `victim-${Math.random()}@tankside.example`;
    for (let i = 0; i < 5; i++) {
      expect((await checkSignInThrottle(email, `198.51.100.${i}`)).blocked).toBe(false);
      await recordSignInFailure(email, `198.51.100.${i}`);
    }
    await recordSignInFailure(email, "198.51.100.9");
    const t = await checkSignInThrottle(email, "198.51.100.10");
    expect(t.blocked).toBe(true);
    // 15 min = 900 s, less the few milliseconds the test took.
    expect(t.retryAfterSeconds).toBeGreaterThan(890);
    expect(t.retryAfterSeconds).toBeLessThanOrEqual(900);
  });

  it("counts addresses separately: one address's failures do not block another's", async () => {
    for (let i = 0; i < 21; i++) await recordSignInFailure(`stranger-${i}-${Math.random()}@x.example`, "203.0.113.66");
    expect((await checkSignInThrottle("someone@x.example", "203.0.113.66")).blocked).toBe(true);
    expect((await checkSignInThrottle("manager@tankside.example", "192.0.2.1")).blocked).toBe(false);
  });

  it("takes the address from the server's load context, not from X-Forwarded-For", () => {
    expect(clientAddressOf({ clientAddress: "192.0.2.1" })).toBe("192.0.2.1");
    expect(clientAddressOf({})).toBe("unknown");
    expect(clientAddressOf(undefined)).toBe("unknown");
  });
});
