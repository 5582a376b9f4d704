import { describe, expect, it } from "vitest";
import { formText } from "./form-text";

describe("formText", () => {
  it("reads a text field, and a missing field or a file as the fallback", () => {
    const form = new FormData();
    form.set("intent", "cancel");
    form.set("upload", new File(["x"], "x.txt"));
    expect(formText(form, "intent")).toBe("cancel");
    expect(formText(form, "missing")).toBe("");
    expect(formText(form, "upload")).toBe("");
    expect(formText(form, "missing", "[]")).toBe("[]");
  });
});
