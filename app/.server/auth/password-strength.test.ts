import { describe, expect, it } from "vitest";
import { newPassword } from "~/lib/validation/people";
import { passwordProblem, personalWords } from "./password-strength";

const jane = { email: "jane.doe@tankside.example", name: "Jane Doe" };

describe("new password length (OWASP ASVS 4.0.3 V2.1.1, V2.1.2)", () => {
  it("refuses 11 characters, accepts 12, and allows long passphrases up to 200", () => {
    expect(newPassword.safeParse("river bend1").success).toBe(false);
    expect(newPassword.safeParse("river bend 7").success).toBe(true);
    expect(newPassword.safeParse("x".repeat(200)).success).toBe(true);
    expect(newPassword.safeParse("x".repeat(201)).success).toBe(false);
  });
});

describe("new password guessability (OWASP ASVS 4.0.3 V2.1.7, zxcvbn-ts)", () => {
  it.each([
    ["correcthorsebatterystaple", /well-known example passphrase/],
    ["Password12345!", /commonly used password/],
    ["P@ssw0rd12345", /predictable letter substitutions/],
    ["1234567890ab", /too easy to guess/],
    ["qwertyuiop12", /too easy to guess/],
    ["aaaaaaaaaaaa", /Repeated characters/],
    ["abcdefghijkl", /sequences/],
  ])("refuses the common or patterned %j and says why", (password, why) => {
    expect(passwordProblem(password, jane)).toMatch(why);
  });

  it.each(["tankside-demo", "tankside-lab-2026", "jane.doe@tankside.example", "jane.doe.tankside", "janedoe@tankside", "JaneDoe2026!!", "janedoe-2026-lab"])(
    "refuses %j, built on the person's e-mail, name or the lab's name",
    (password) => {
      expect(passwordProblem(password, jane)).toMatch(/built on your name, your e-mail address or the lab.s name/);
    },
  );

  it("judges the same words differently for someone whose name they are not", () => {
    expect(passwordProblem("janedoe-2026-lab", jane)).not.toBeNull();
    expect(passwordProblem("janedoe-2026-lab", { email: "ravi.k@tankside.example", name: "Ravi K" })).toBeNull();
  });

  it.each(["kettle ferry lantern quietly", "Moss grows on seven bridges", "rotating tanks are fun", "Jane's kettle ferry lantern"])(
    "accepts the passphrase %j",
    (password) => {
      expect(passwordProblem(password, jane)).toBeNull();
    },
  );

  it("takes the pieces of the e-mail address and name a guesser would try", () => {
    expect(personalWords(jane)).toEqual(expect.arrayContaining(["jane.doe@tankside.example", "jane.doe", "janedoe", "jane", "doe", "tankside", "jane doe"]));
    expect(personalWords(jane)).not.toContain("example");
  });
});
