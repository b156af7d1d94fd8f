/**
 * Who goes first on a shared machine: while a view's first screen is being computed, background work
 * (the Ranked Lists view's headlines, read on their own thread) waits, and a background read already
 * under way is stopped and done again later. On two cores, a background read of the file just clicked
 * (or of any other) would otherwise take half the machine from the read the user is waiting for.
 * No `vscode` import, so it is tested in plain Node.
 */
export class ForegroundWork {
  private holds = 0;
  private waiting: (() => void)[] = [];
  private readonly onHoldListeners = new Set<() => void>();

  /** True while at least one first screen is being computed. */
  get busy(): boolean {
    return this.holds > 0;
  }

  /**
   * Marks a first screen as under way; the function returned ends it (calling it again does nothing).
   * Background work under way is told at once (`onHold`).
   */
  hold(): () => void {
    this.holds++;
    for (const listener of [...this.onHoldListeners]) listener();
    let released = false;
    return () => {
      if (released) return;
      released = true;
      this.holds--;
      if (this.holds === 0) {
        const waiting = this.waiting;
        this.waiting = [];
        for (const resolve of waiting) resolve();
      }
    };
  }

  /** Resolves once no first screen is under way (at once when none is). */
  idle(): Promise<void> {
    if (this.holds === 0) return Promise.resolve();
    return new Promise((resolve) => this.waiting.push(resolve));
  }

  /** Calls `listener` each time a first screen starts; the function returned stops that. */
  onHold(listener: () => void): () => void {
    this.onHoldListeners.add(listener);
    return () => this.onHoldListeners.delete(listener);
  }
}
