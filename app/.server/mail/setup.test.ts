import { describe, expect, it } from "vitest";
import { mailSetupProblem } from "../env";

describe("mail setup at start", () => {
  it("refuses production without SMTP_URL, naming SMTP_URL and the explicit opt-in", () => {
    const problem = mailSetupProblem({ NODE_ENV: "production" });
    expect(problem).toMatch(/SMTP_URL/);
    expect(problem).toMatch(/TANKSIDE_FAKE_MAIL=1/);
    expect(problem).not.toMatch(/\n/);
  });

  it("starts in production with a relay, or with the fake server asked for on purpose", () => {
    expect(mailSetupProblem({ NODE_ENV: "production", SMTP_URL: "smtp://relay.example:25" })).toBeNull();
    expect(mailSetupProblem({ NODE_ENV: "production", TANKSIDE_FAKE_MAIL: "1" })).toBeNull();
    expect(mailSetupProblem({ NODE_ENV: "production", TANKSIDE_FAKE_MAIL: "yes" })).not.toBeNull();
  });

  it("keeps the fake server as the default outside production", () => {
    expect(mailSetupProblem({ NODE_ENV: "development" })).toBeNull();
    expect(mailSetupProblem({ NODE_ENV: "test" })).toBeNull();
  });
});
