import { describe, expect, it } from "vitest";
import { asSentence, normalizeDecimalText } from "./format.ts";

describe("decimal input", () => {
  it("reads a decimal comma as a decimal point, so 150,5 is 150.5 and never 1505", () => {
    expect(normalizeDecimalText("150,5")).toEqual({ text: "150.5", isAmbiguous: false });
    expect(Number(normalizeDecimalText("150,5").text)).toBe(150.5);
    expect(normalizeDecimalText("-0,25").text).toBe("-0.25");
    expect(normalizeDecimalText(",5").text).toBe(".5");
    // Typing "150," on the way to "150,5": the box shows "150." meanwhile.
    expect(normalizeDecimalText("150,").text).toBe("150.");
    // A lone 0 before the comma is never a thousands group.
    expect(normalizeDecimalText("0,500")).toEqual({ text: "0.500", isAmbiguous: false });
  });

  it("refuses a comma that could be a thousands separator instead of guessing", () => {
    expect(normalizeDecimalText("1,500")).toEqual({ text: "1,500", isAmbiguous: true });
    expect(Number.isNaN(Number(normalizeDecimalText("1,500").text))).toBe(true);
  });

  it("leaves points, plain numbers and text that is not a number alone", () => {
    expect(normalizeDecimalText("150.5")).toEqual({ text: "150.5", isAmbiguous: false });
    expect(normalizeDecimalText("250")).toEqual({ text: "250", isAmbiguous: false });
    expect(normalizeDecimalText("1,2,3")).toEqual({ text: "1,2,3", isAmbiguous: false });
    expect(normalizeDecimalText("")).toEqual({ text: "", isAmbiguous: false });
  });
});

describe("messages as sentences", () => {
  it("capitalise a Latin first letter and end with a full stop", () => {
    expect(asSentence("joint 1 cap 80 deg/s exceeds 75 % of its rated 150 deg/s")).toBe("Joint 1 cap 80 deg/s exceeds 75 % of its rated 150 deg/s.");
    expect(asSentence("Saved.")).toBe("Saved.");
  });

  it("leave a Greek symbol at the start alone: ε, never the capital Ε", () => {
    expect(asSentence("ε above 1000 mm is not a useful region width")).toBe("ε above 1000 mm is not a useful region width.");
    expect(asSentence("ε above 1000 mm is not a useful region width")).not.toMatch(/^\u0395/);
  });
});
