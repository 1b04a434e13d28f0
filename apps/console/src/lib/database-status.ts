import { useSyncExternalStore } from "react";

/**
 * Whether the server last said its database is unavailable (issue 11, item 5): set by the API client when
 * an answer carries `database_unavailable` (or the jog socket is closed with the matching code), cleared by
 * the next successful answer. Live jogging runs in the server's memory and continues meanwhile; only
 * reading and saving wait. Components read it through useIsDatabaseUnavailable().
 */
let isUnavailable = false;
const listeners = new Set<() => void>();

export function reportDatabaseUnavailable(): void {
  setUnavailable(true);
}

export function reportDatabaseAvailable(): void {
  setUnavailable(false);
}

function setUnavailable(next: boolean): void {
  if (next === isUnavailable) return;
  isUnavailable = next;
  for (const listener of listeners) listener();
}

export function isDatabaseUnavailable(): boolean {
  return isUnavailable;
}

function subscribe(listener: () => void): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

export function useIsDatabaseUnavailable(): boolean {
  return useSyncExternalStore(subscribe, isDatabaseUnavailable);
}
