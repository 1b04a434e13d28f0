import { describe, expect, it } from "vitest";
import { defaultProfileParams, VERSION_FILE_FORMAT, type VersionFile } from "@jogwright/shared";
import { ApiRequestError } from "../../../lib/api-client.ts";
import { checkVersionFileSize, importedTitle, importRefusalOf, labelForVersionFilePath, MAX_VERSION_FILE_BYTES, readVersionFile } from "./version-file.ts";

// Rated speeds of the six-axis demo arm (PRODUCT.md table): 150, 150, 190, 300, 300, 450 deg/s.
const RATED_RAD_PER_S = [150, 150, 190, 300, 300, 450].map((d) => (d * Math.PI) / 180);

/** A file as GET /api/versions/:id/export writes it (modules/version-files/service.ts). */
const exported = (): VersionFile => ({
  format: VERSION_FILE_FORMAT,
  schemaVersion: 1,
  profile: { id: 12, name: "Cell 4 welding" },
  version: { id: 40, number: 1, note: "defaults" },
  arm: { id: 3, name: "Demo six-axis", revisionId: 7, revision: 1 },
  tool: { id: 9, name: "Flange tool" },
  params: defaultProfileParams(RATED_RAD_PER_S),
  paramsSha256: "a".repeat(64),
  exportedAt: "2026-12-03T12:00:00.000Z",
});

describe("reading a chosen file as a version file", () => {
  it("accepts an exported file and sends its JSON exactly as the file holds it", () => {
    const file = exported();
    const text = JSON.stringify(file, null, 2);
    const reading = readVersionFile(text, "profile-12-v1.json");
    expect(reading.isVersionFile).toBe(true);
    if (!reading.isVersionFile) return;
    expect(reading.file).toEqual(file);
    expect(reading.body).toEqual(JSON.parse(text));
  });

  it("reads a file an editor saved with a byte-order mark", () => {
    expect(readVersionFile(`\uFEFF${JSON.stringify(exported())}`, "bom.json").isVersionFile).toBe(true);
  });

  it("says a file that is not JSON is not a version file, naming the file", () => {
    const reading = readVersionFile("type,a_mm,alpha_deg\nrevolute,0,90\n", "arm.csv");
    expect(reading).toMatchObject({ isVersionFile: false, title: "arm.csv is not a version file", problems: [] });
    if (reading.isVersionFile) return;
    expect(reading.message).toMatch(/^It is not JSON/);
  });

  it("says JSON without the version-file format (an arm file, say) is not a version file", () => {
    for (const text of ['{"convention":"standard","joints":[]}', "[1,2,3]", "null", '"profile"']) {
      const reading = readVersionFile(text, "other.json");
      expect(reading).toMatchObject({ isVersionFile: false, title: "other.json is not a version file" });
      if (reading.isVersionFile) return;
      expect(reading.message).toContain(`"format": "${VERSION_FILE_FORMAT}"`);
    }
  });

  it("names another schema version rather than listing every field", () => {
    const reading = readVersionFile(JSON.stringify({ ...exported(), schemaVersion: 2 }), "future.json");
    expect(reading).toMatchObject({ isVersionFile: false, title: "future.json has another schema version", problems: [] });
    if (reading.isVersionFile) return;
    expect(reading.message).toContain("schema version 2; this console reads version 1");
  });

  it("lists each refused field of a version file by its label, parameters by their form labels", () => {
    const file = exported();
    const broken = { ...file, paramsSha256: "not a hash", params: { ...file.params, tcpLinearCapMPerS: -1 } };
    const reading = readVersionFile(JSON.stringify(broken), "broken.json");
    expect(reading.isVersionFile).toBe(false);
    if (reading.isVersionFile) return;
    expect(reading.title).toBe("broken.json is not a valid version file");
    expect(reading.problems.map((p) => [p.path, p.label])).toEqual(
      expect.arrayContaining([
        ["params.tcpLinearCapMPerS", "TCP linear cap"],
        ["paramsSha256", "SHA-256"],
      ]),
    );
    expect(reading.problems.find((p) => p.path === "paramsSha256")?.message).toBe("a SHA-256 in hex");
  });

  it("refuses a file larger than the server's body limit before reading it", () => {
    expect(checkVersionFileSize("small.json", 3_000)).toBeNull();
    expect(checkVersionFileSize("big.json", MAX_VERSION_FILE_BYTES + 1)).toMatchObject({ isVersionFile: false, title: "big.json is not a version file" });
  });
});

describe("the server's refusal of an import, in words", () => {
  it("a changed hash reads as the server's sentence with the SHA-256 issue by name", () => {
    const error = new ApiRequestError(422, "validation_failed", "The file's parameters do not match its SHA-256: the file was changed after it was exported. Nothing was saved; export the version again.", [
      { path: "paramsSha256", message: "the parameters hash to 0123456789ab…, the file says aaaaaaaaaaaa…" },
    ]);
    expect(importRefusalOf(error, "profile-12-v1-edited.json")).toEqual({
      title: "Not imported: profile-12-v1-edited.json",
      message: error.message,
      problems: [{ path: "paramsSha256", label: "SHA-256", message: "the parameters hash to 0123456789ab…, the file says aaaaaaaaaaaa…" }],
    });
  });

  it("another arm and a ceiling name the arm and the parameter", () => {
    expect(labelForVersionFilePath("arm.id")).toBe("Arm");
    expect(labelForVersionFilePath("params.jointRateCapsRadPerS.3")).toBe("Joint 4 rate cap");
    expect(labelForVersionFilePath("somethingElse")).toBe("somethingElse");
  });

  it("a failure that is not the server's (a network error) keeps its message", () => {
    expect(importRefusalOf(new Error("offline"), "f.json")).toEqual({ title: "Not imported: f.json", message: "offline", problems: [] });
  });
});

describe("a successful import", () => {
  it("names the new draft and the file", () => {
    expect(importedTitle({ number: 3, state: "draft" }, "profile-12-v1.json")).toBe("Imported as v3 (draft) from profile-12-v1.json");
  });
});
