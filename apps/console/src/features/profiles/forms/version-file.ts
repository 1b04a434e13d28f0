import {
  labelForProfilePath,
  VERSION_FILE_FORMAT,
  VERSION_FILE_SCHEMA_VERSION,
  VERSION_STATE_LABELS,
  versionFileSchema,
  type ProfileVersion,
  type VersionFile,
} from "@jogwright/shared";
import { isApiRequestError } from "../../../lib/api-client.ts";

/**
 * A profile version as a file (issue 12, "Export and import"): `GET /api/versions/:id/export` writes it,
 * `POST /api/profiles/:id/import` takes it back as a new draft. The browser reads the chosen file and checks
 * its shape with the shared `versionFileSchema` before sending it; the server alone checks the hash, the arm
 * and the site ceilings, and its refusal is put into words here.
 */

/** The server's JSON body limit (app.ts, express.json 256 kB): a larger file could never be imported. */
export const MAX_VERSION_FILE_BYTES = 256 * 1024;

/** Where a version's file downloads from (an attachment named profile-<id>-v<n>.json). */
export const versionExportPath = (versionId: number): string => `/api/versions/${versionId}/export`;

/** One problem, named for a person: "SHA-256", "TCP linear cap", not `paramsSha256` or `params.tcpLinearCapMPerS`. */
export interface VersionFileProblem {
  /** The dotted path in the file, as the schema or the server names it ("" for the file as a whole). */
  path: string;
  label: string;
  message: string;
}

export type VersionFileReading =
  | {
      isVersionFile: true;
      file: VersionFile;
      /** The JSON exactly as the file holds it: what is sent, so the server judges the file, not a re-encoding. */
      body: unknown;
    }
  | { isVersionFile: false; title: string; message: string; problems: VersionFileProblem[] };

const TOP_LABELS: Record<string, string> = {
  format: "Format",
  schemaVersion: "Schema version",
  paramsSha256: "SHA-256",
  exportedAt: "Exported at",
  params: "Parameters",
  "profile.id": "Profile",
  "profile.name": "Profile name",
  "version.id": "Version",
  "version.number": "Version number",
  "version.note": "Version note",
  "arm.id": "Arm",
  "arm.name": "Arm name",
  "arm.revisionId": "Arm revision",
  "arm.revision": "Arm revision number",
  tool: "Tool",
  "tool.id": "Tool",
  "tool.name": "Tool name",
};

/** A label for a path in a version file: the parameters by their form labels, the rest by name. */
export function labelForVersionFilePath(path: string): string {
  if (path.startsWith("params.")) return labelForProfilePath(path.slice("params.".length));
  return TOP_LABELS[path] ?? path;
}

const problemOf = (path: string, message: string): VersionFileProblem => ({ path, label: labelForVersionFilePath(path), message });

const isRecord = (value: unknown): value is Record<string, unknown> => typeof value === "object" && value !== null && !Array.isArray(value);

const NOT_A_VERSION_FILE_HINT = "Choose a file written by Export in a profile's version list (profile-<id>-v<n>.json).";

/**
 * Reads the text of a chosen file as a version file. Tells apart a file that is not one at all (not JSON,
 * or JSON without the version-file format: an arm file, say), a version file of another schema version, and
 * a version file with fields the schema refuses (each by its label).
 */
export function readVersionFile(text: string, fileName: string): VersionFileReading {
  let json: unknown;
  try {
    // A BOM is not JSON; an editor may have added one.
    json = JSON.parse(text.replace(/^\uFEFF/, ""));
  } catch (cause) {
    const reason = cause instanceof Error ? ` (${cause.message})` : "";
    return { isVersionFile: false, title: `${fileName} is not a version file`, message: `It is not JSON${reason}. ${NOT_A_VERSION_FILE_HINT}`, problems: [] };
  }
  if (!isRecord(json) || json.format !== VERSION_FILE_FORMAT) {
    return {
      isVersionFile: false,
      title: `${fileName} is not a version file`,
      message: `It is JSON, but not a Jogwright profile version: it has no "format": "${VERSION_FILE_FORMAT}". ${NOT_A_VERSION_FILE_HINT}`,
      problems: [],
    };
  }
  if (json.schemaVersion !== VERSION_FILE_SCHEMA_VERSION) {
    return {
      isVersionFile: false,
      title: `${fileName} has another schema version`,
      message: `It says schema version ${JSON.stringify(json.schemaVersion ?? null)}; this console reads version ${VERSION_FILE_SCHEMA_VERSION}.`,
      problems: [],
    };
  }
  const parsed = versionFileSchema.safeParse(json);
  if (!parsed.success) {
    return {
      isVersionFile: false,
      title: `${fileName} is not a valid version file`,
      message: "It is a version file, but some of its fields are missing or out of range.",
      problems: parsed.error.issues.map((issue) => problemOf(issue.path.map(String).join("."), issue.message)),
    };
  }
  return { isVersionFile: true, file: parsed.data, body: json };
}

/** Refuses a file too large to be a version file before reading it (a version file is a few kB). */
export function checkVersionFileSize(fileName: string, sizeBytes: number): VersionFileReading | null {
  if (sizeBytes <= MAX_VERSION_FILE_BYTES) return null;
  return {
    isVersionFile: false,
    title: `${fileName} is not a version file`,
    message: `It is ${Math.ceil(sizeBytes / 1024)} kB; a version file is a few kB and the server takes at most ${MAX_VERSION_FILE_BYTES / 1024} kB. ${NOT_A_VERSION_FILE_HINT}`,
    problems: [],
  };
}

export interface ImportRefusal {
  title: string;
  /** The server's sentence (it says that nothing was saved). */
  message: string;
  problems: VersionFileProblem[];
}

/**
 * The server's refusal of an import in words: its message, and each issue by the label of the path it
 * names (422 `paramsSha256`: the file was changed; `arm.id`: another arm; `params.*`: above a ceiling or
 * not fitting the arm; 400: a revision or tool not of this arm, or a schema failure).
 */
export function importRefusalOf(error: unknown, fileName: string): ImportRefusal {
  const title = `Not imported: ${fileName}`;
  if (!isApiRequestError(error)) return { title, message: error instanceof Error && error.message ? error.message : "Something went wrong.", problems: [] };
  return { title, message: error.message, problems: error.issues.map((i) => problemOf(i.path, i.message)) };
}

/** The outcome of a successful import: "Imported as v3 (draft) from profile-12-v1.json". */
export function importedTitle(version: Pick<ProfileVersion, "number" | "state">, fileName: string): string {
  return `Imported as v${version.number} (${VERSION_STATE_LABELS[version.state].toLowerCase()}) from ${fileName}`;
}
