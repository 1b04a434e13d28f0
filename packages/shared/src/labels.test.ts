import { describe, expect, it } from "vitest";
import { z } from "zod";
import { humanizeCode, label, LABELLED_SETS } from "./labels.ts";

/** The values of a set that its map has no label for. */
const unlabelled = (values: readonly string[], map: Readonly<Record<string, string>>) => values.filter((value) => !Object.hasOwn(map, value));

describe("human labels", () => {
  it("the check finds a value added to an enum without a label", () => {
    // A stand-in for a zod enum that grew a member: the map below predates "withdrawn".
    const states = z.enum(["draft", "submitted", "withdrawn"]);
    expect(unlabelled(states.options, { draft: "Draft", submitted: "Submitted" })).toEqual(["withdrawn"]);
  });

  for (const [kind, { values, labels }] of Object.entries(LABELLED_SETS)) {
    it(`every value of the ${kind} set has a label a person can read`, () => {
      const map = labels as Readonly<Record<string, string>>;
      const missing = unlabelled(values, map);
      expect(missing, `${kind}: values without a label — add them to packages/shared/src/labels.ts`).toEqual([]);
      for (const value of values) {
        const text = map[value]!;
        // A label starts a sentence: a capital letter, and never the code itself.
        expect(text, `${kind}.${value}`).toMatch(/^[A-Z0-9]/);
        if (/[-_]/.test(value) || value.length > 1) expect(text, `${kind}.${value}`).not.toBe(value);
      }
    });

    it(`the ${kind} map labels nothing outside its set`, () => {
      const extra = Object.keys(labels).filter((key) => !(values as readonly string[]).includes(key));
      expect(extra).toEqual([]);
    });
  }

  it("label() reads a value through its set's map", () => {
    expect(label("role", "safety_officer")).toBe("Safety officer");
    expect(label("mailKind", "version-rejected")).toBe("Version rejected");
    expect(label("auditEntity", "ceilings")).toBe("Site ceilings");
  });

  it("a value the set no longer holds reads as words, never as the code", () => {
    expect(label("auditAction", "estop-latch-old")).toBe("Estop latch old");
    expect(humanizeCode("no_session")).toBe("No session");
    expect(humanizeCode("tcpLinearCap")).toBe("Tcp linear cap");
  });
});
