/**
 * A store for React's useSyncExternalStore: the current snapshot, replaced (never changed in place) on
 * every change, so a component re-renders exactly when what it read is a new object.
 */
export class SnapshotStore<T extends object> {
  private readonly listeners = new Set<() => void>();

  constructor(protected snapshot: T) {}

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };

  getSnapshot = (): T => this.snapshot;

  /** A new snapshot with `patch` applied; every subscriber is told. */
  protected publish(patch: Partial<T>): void {
    this.snapshot = { ...this.snapshot, ...patch };
    for (const listener of this.listeners) listener();
  }
}
