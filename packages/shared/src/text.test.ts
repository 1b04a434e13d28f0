import { describe, expect, it } from "vitest";
import { createProfileSchema } from "./profile-api.ts";
import { SINGLE_LINE_MESSAGE, singleLineName } from "./text.ts";
import { createUserSchema, updateUserSchema } from "./users.ts";

const name = singleLineName({ requiredMessage: "a name is required", max: 80 });

describe("single-line names", () => {
  it.each([
    ["a CR/LF pair (mail header injection)", "Cell 3\r\nBcc: someone@example.com"],
    ["a lone line feed", "Cell 3\nnight shift"],
    ["a tab", "Cell\t3"],
    ["a NUL", "Cell\u00003"],
    ["DEL", "Cell\u007f3"],
    ["a C1 next-line character", "Cell\u00853"],
    ["the Unicode line separator", "Cell\u20283"],
    ["the Unicode paragraph separator", "Cell\u20293"],
  ])("refuse %s inside the name, with a message saying why", (_what, value) => {
    const result = name.safeParse(value);
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.message).toBe(SINGLE_LINE_MESSAGE);
  });

  it("accept accents, other scripts and emoji, and trim line breaks at the ends", () => {
    expect(name.parse("Åsa Øberg — 溶接セル 🤖")).toBe("Åsa Øberg — 溶接セル 🤖");
    expect(name.parse("\r\n  Cell 3 night shift \n")).toBe("Cell 3 night shift");
  });

  it("are what profile names and display names are made of", () => {
    expect(createProfileSchema.shape.name.safeParse("a\r\nb").success).toBe(false);
    expect(createUserSchema.shape.displayName.safeParse("a\nb").success).toBe(false);
    expect(updateUserSchema.safeParse({ displayName: "a\nb" }).success).toBe(false);
    expect(updateUserSchema.safeParse({ displayName: "Anna Berg" }).success).toBe(true);
  });
});
