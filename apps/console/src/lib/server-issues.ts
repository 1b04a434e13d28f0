import type { FieldValues, Path, UseFormSetError } from "react-hook-form";
import { isApiRequestError } from "./api-client.ts";

/**
 * Which form field a server issue belongs to: the fields named by the first segment of the issue's path
 * ("username"), or a function for forms whose fields are not named like the request (UI units, nesting).
 */
export type ServerIssueFields<T extends FieldValues> = readonly Path<T>[] | ((issuePath: string) => Path<T> | undefined);

/**
 * Puts the server's 400 issues onto the form fields they name; returns the messages no field owns, for a
 * form-level message. Every console form that submits to the server passes its mutation's error here.
 */
export function applyServerIssues<T extends FieldValues>(error: unknown, fields: ServerIssueFields<T>, setError: UseFormSetError<T>): string[] {
  if (!isApiRequestError(error)) return [];
  const fieldOf = typeof fields === "function" ? fields : (path: string) => fields.find((f) => f === path.split(".")[0]);
  const unplaced: string[] = [];
  let isFirst = true;
  for (const issue of error.issues) {
    const field = fieldOf(issue.path);
    if (field) {
      setError(field, { type: "server", message: issue.message }, { shouldFocus: isFirst });
      isFirst = false;
    } else unplaced.push(issue.path ? `${issue.path}: ${issue.message}` : issue.message);
  }
  return unplaced;
}
