import { meSchema, type SignInInput, type User } from "@jogwright/shared";
import { apiRequest, isApiRequestError } from "../../../lib/api-client.ts";

/** Signing in and out; the session query itself is lib/session.ts. */

export function signIn(input: SignInInput): Promise<{ user: User }> {
  return apiRequest("/api/auth/sign-in", { method: "POST", body: input, schema: meSchema });
}

export async function signOut(): Promise<void> {
  try {
    await apiRequest("/api/auth/sign-out", { method: "POST" });
  } catch (error) {
    // Already signed out on the server: the outcome the person asked for.
    if (isApiRequestError(error) && error.status === 401) return;
    throw error;
  }
}
