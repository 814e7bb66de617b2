/**
 * Ctrl-C handling for a scan: the first SIGINT/SIGTERM asks to stop after the files in flight (their
 * records are kept); a second one stops the workers at once.
 */
export interface Interruption {
  readonly requested: boolean;
  readonly immediate: boolean;
  /** Called once, on the second signal. */
  onImmediate(callback: () => void): void;
  dispose(): void;
}

export function watchInterrupts(onFirst: () => void): Interruption {
  let requested = false;
  let immediate = false;
  const callbacks: (() => void)[] = [];
  const handler = (): void => {
    if (!requested) {
      requested = true;
      onFirst();
      return;
    }
    if (!immediate) {
      immediate = true;
      for (const cb of callbacks) cb();
    }
  };
  process.on("SIGINT", handler);
  process.on("SIGTERM", handler);
  return {
    get requested() {
      return requested;
    },
    get immediate() {
      return immediate;
    },
    onImmediate(callback) {
      callbacks.push(callback);
    },
    dispose() {
      process.off("SIGINT", handler);
      process.off("SIGTERM", handler);
    },
  };
}
