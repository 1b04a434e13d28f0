import type { ApiIssue } from "../../../lib/api-client.ts";

/** One problem of a refused arm file, as the upload page lists it. */
export interface UploadIssue {
  /** 1-based; null for a problem of the file as a whole. */
  line: number | null;
  field: string;
  message: string;
}

/**
 * A 422 issue of `POST /api/arms/upload` (path "line N: field", or the field alone for the whole file, as
 * modules/arms/routes.ts writes it) → its line and field.
 */
export function uploadIssueOf(issue: ApiIssue): UploadIssue {
  const match = /^line (\d+): (.*)$/.exec(issue.path);
  return match ? { line: Number(match[1]), field: match[2]!, message: issue.message } : { line: null, field: issue.path, message: issue.message };
}
