import { describe, expect, it } from "vitest";
import { versionLabel } from "./version-picker.tsx";

describe("the version picker's labels", () => {
  it("call a version approved only when the server's driving rule says so: a flagged approved version is a test drive", () => {
    expect(versionLabel({ number: 3, state: "approved", exceedsCeilings: false, kind: "approved" })).toBe("Version 3 · approved");
    const flagged = versionLabel({ number: 2, state: "approved", exceedsCeilings: true, kind: "test-drive" });
    expect(flagged).toContain("UNAPPROVED");
    expect(flagged).toContain("above the site ceilings");
    expect(versionLabel({ number: 4, state: "draft", exceedsCeilings: false, kind: "test-drive" })).toBe("Version 4 · draft — UNAPPROVED, engineer test drive");
  });
});
