import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { currentPasswordThrottle, signInThrottles } from "~/.server/auth/rate-limit";
import { LAST_USED_WRITE_MS } from "~/.server/auth/api-tokens";
import { MIN_SCORE } from "~/.server/auth/password-strength";
import { SESSION_ABSOLUTE_HOURS, settingDefaults, settingLimits } from "~/lib/settings";
import { API_TOKEN_DEFAULT_DAYS, API_TOKEN_MAX_DAYS } from "~/lib/validation/api-tokens";
import { PASSWORD_MIN_LENGTH } from "~/lib/validation/people";

/** The README's security promises, built from the numbers the code enforces: one changes, this fails. */
const readme = fs.readFileSync(path.join(process.cwd(), "README.md"), "utf8").replace(/\s+/g, " ");
const nth = (n: number) => `${n}${n === 1 ? "st" : n === 2 ? "nd" : n === 3 ? "rd" : "th"}`;

describe("README security section matches the code", () => {
  it.each([
    `Passwords: ${PASSWORD_MIN_LENGTH} to 200 characters`,
    `a password it scores below ${MIN_SCORE} of 4`,
    `the ${nth(signInThrottles.account.failures)} failure for one account within ${signInThrottles.account.windowSeconds / 60} minutes blocks it for ${signInThrottles.account.blockSeconds / 60} minutes`,
    `the ${nth(signInThrottles.address.failures)} from one client address within ${signInThrottles.address.windowSeconds / 60} minutes blocks that address for ${signInThrottles.address.blockSeconds / 60} minutes`,
    `the ${nth(currentPasswordThrottle.failures)} within ${currentPasswordThrottle.windowSeconds / 60} minutes blocks the check for ${currentPasswordThrottle.blockSeconds / 60} minutes`,
    `Sessions end after ${settingDefaults.sessionIdleHours} hours without a request`,
    `${settingLimits.sessionIdleHours.min} to ${settingLimits.sessionIdleHours.max} hours`,
    `${SESSION_ABSOLUTE_HOURS} hours after sign-in however busy`,
    `API tokens work ${API_TOKEN_DEFAULT_DAYS} days unless a lifetime of 1 to ${API_TOKEN_MAX_DAYS} days is chosen`,
    `at most once a ${LAST_USED_WRITE_MS === 60_000 ? "minute" : `${Number(LAST_USED_WRITE_MS)} ms`}`,
  ])("states %j", (promise) => {
    expect(readme).toContain(promise);
  });
});
