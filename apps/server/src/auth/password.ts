import { Argon2id } from "oslo/password";

/** Argon2id through oslo (its defaults: 19 MiB memory, 2 passes, parallelism 1 — OWASP's recommended minimum). */
const argon2id = new Argon2id();

export function hashPassword(password: string): Promise<string> {
  return argon2id.hash(password);
}

export function verifyPassword(hash: string, password: string): Promise<boolean> {
  return argon2id.verify(hash, password);
}

/** A hash to verify against when the account does not exist, so both answers take the same time. */
let decoyHash: Promise<string> | null = null;
export function decoyPasswordHash(): Promise<string> {
  decoyHash ??= argon2id.hash("jogwright-decoy-password");
  return decoyHash;
}
