import { describe, expect, it } from "vitest";
import { newPassword } from "./people";

describe("new passwords", () => {
  it.each(["1234567890ab", "aaaaaaaaaaaa", "abcabcabcabc", "qwertyuiop12", "Password1234!", "abcdefghijkl"])("refuses %j", (p) => {
    expect(newPassword.safeParse(p).success).toBe(false);
  });
  it("refuses 11 characters and accepts a 12-character sentence and the demo password", () => {
    expect(newPassword.safeParse("river bend1").success).toBe(false);
    expect(newPassword.safeParse("river bend 7").success).toBe(true);
    expect(newPassword.safeParse("tankside-demo").success).toBe(true);
  });
});
