import { describe, expect, it } from "vitest";
import { uploadIssueOf } from "./upload-issues.ts";

describe("a refused arm file's problems", () => {
  it("carry the line and field the server's path names", () => {
    expect(uploadIssueOf({ path: "line 5: a_mm", message: '"35o" is not a number' })).toEqual({ line: 5, field: "a_mm", message: '"35o" is not a number' });
    expect(uploadIssueOf({ path: "line 12: joints.3.maxSpeed", message: "must be above zero" })).toMatchObject({ line: 12, field: "joints.3.maxSpeed" });
  });

  it("a problem of the whole file has no line", () => {
    expect(uploadIssueOf({ path: "file", message: "zero joints" })).toEqual({ line: null, field: "file", message: "zero joints" });
  });
});
