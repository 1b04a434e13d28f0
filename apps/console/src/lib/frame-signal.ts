/**
 * Tells listeners, synchronously, each time a frame source has a new frame: the 3D view asks for a render
 * then (arm-view.tsx). Nothing polls, so a page whose arm stands still schedules no animation frames.
 */
export class FrameSignal {
  private readonly listeners = new Set<() => void>();

  /** Calls `listener` on every new frame from now on; returns the unsubscribe. */
  readonly onFrame = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => {
      this.listeners.delete(listener);
    };
  };

  notify(): void {
    for (const listener of this.listeners) listener();
  }
}
