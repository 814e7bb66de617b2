/**
 * Whether a scan's files get a second thread each for their spectral side (spectralThreadClient.ts), and
 * which files. Issue #22: on two cores one long file's scan takes ≈ 0.6× the wall time on two threads,
 * for ≈ 5 % more CPU; since the thread now ends before the images are drawn, it costs no memory at the
 * scan's peak. But a second thread only helps when a core would otherwise idle: a scan measuring as many
 * files at once as there are cores (`--workers 2`, many files, two cores) already keeps every core busy,
 * and another thread per file would only make them take turns.
 */

/**
 * Shortest file that gets the second thread, s: starting the thread costs ≈ 40 ms of CPU on the other
 * core and the reading thread waits for it to take its first blocks, while a second of audio saves
 * ≈ 2 ms of the reading thread's time; a short file is start-up bound anyway.
 */
export const SPECTRAL_THREAD_MIN_SECONDS = 60;

export interface SpectralThreadChoice {
  /** --spectral-thread (true) or --no-spectral-thread (false); undefined: decide from the cores. */
  forced: boolean | undefined;
  workers: number;
  /** Files the scan may measure. */
  files: number;
  /** Cores the process may use (os.availableParallelism()). */
  cores: number;
}

/** True when every file measured at once can have a second thread without outnumbering the cores. */
export function useSpectralThread(c: SpectralThreadChoice): boolean {
  if (c.forced !== undefined) return c.forced;
  const atOnce = Math.max(1, Math.min(c.workers, c.files));
  return 2 * atOnce <= c.cores;
}
