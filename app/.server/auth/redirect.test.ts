import { describe, expect, it } from "vitest";
import { safeRedirectTo } from "./permissions";

/** What a browser does with a Location header: resolve it against the page that got it. */
const landsOn = (location: string) => new URL(location, "https://lab.tankside.example/sign-in").host;

describe("safeRedirectTo keeps the next page on this site", () => {
  const attacks = [
    "/.//evil.example",
    "/..//evil.example",
    "/a/..//evil.example",
    "/a/b/../..//evil.example",
    "/././/evil.example/x",
    "//evil.example",
    "///evil.example",
    "/\\evil.example",
    "\\\\evil.example",
    "/\t/evil.example",
    "/\n/evil.example",
    "/\r\n/evil.example",
    "/%09/evil.example",
    "https://evil.example/",
    "javascript:alert(1)",
    " /evil",
    "evil.example",
    "/sign-in?redirectTo=//evil.example",
  ];
  it.each(attacks)("refuses %j", (value) => {
    const out = safeRedirectTo(value, "/");
    expect(landsOn(out)).toBe("lab.tankside.example");
    expect(out.startsWith("//")).toBe(false);
  });

  it("the dot-segment tricks in particular fall back to the home page", () => {
    for (const v of ["/.//evil.example", "/..//evil.example", "/a/..//evil.example"]) expect(safeRedirectTo(v, "/home")).toBe("/home");
  });

  it("keeps ordinary paths with their query and fragment", () => {
    expect(safeRedirectTo("/runs/12?tab=check#plots")).toBe("/runs/12?tab=check#plots");
    expect(safeRedirectTo("/runs?state=checked&table=2")).toBe("/runs?state=checked&table=2");
    // Encoded slashes stay encoded: the browser asks this site for /%2F%2Fevil.example.
    const encoded = safeRedirectTo("/%2F%2Fevil.example");
    expect(encoded).toBe("/%2F%2Fevil.example");
    expect(landsOn(encoded)).toBe("lab.tankside.example");
  });
});
