import type { FieldValues, Path, UseFormSetError } from "react-hook-form";
import { isApiRequestError } from "./api-client.ts";

/**
 * Puts the server's 400 issues onto the form fields they name (first segment of `path`); returns the
 * messages no field owns, for a form-level message.
 */
export function applyServerIssues<T extends FieldValues>(
  error: unknown,
  fields: readonly Path<T>[],
  setError: UseFormSetError<T>,
): string[] {
  if (!isApiRequestError(error)) return [];
  const unplaced: string[] = [];
  for (const issue of error.issues) {
    const field = fields.find((f) => f === issue.path.split(".")[0]);
    if (field) setError(field, { type: "server", message: issue.message }, { shouldFocus: true });
    else unplaced.push(issue.path ? `${issue.path}: ${issue.message}` : issue.message);
  }
  return unplaced;
}
