/**
 * Whether a scan's files get a second thread each (spectralThreadClient.ts), and which files. Issue #22:
 * a second thread only helps when a core would otherwise idle. A scan measuring as many files at once as
 * there are cores (`--workers 2`, many files, two cores) already keeps every core busy, and another thread
 * per file would only make them take turns. The thread ends before the images are drawn, where a scan's
 * memory peaks, so it adds nothing to the peak (measured on the 600 s file, the 4.3 h RF64 and the 4 h FLAC).
 */

/**
 * Shortest file that gets the second thread, s. Measured on two cores (5 December 2026, 4 runs each, the
 * busier thread's own CPU time, which a free core's wall time follows): 10 s of 48 kHz stereo took
 * 0.38–0.44 s on one thread and 0.20–0.24 s on the busier of two, for ≈ 0.07 s more CPU in all; 20 s
 * 0.42–0.46 s against 0.24–0.28 s; 60 s 0.60–0.65 s against 0.32–0.35 s. Shorter files were not measured,
 * and a scan of one very short file is start-up bound (issue #22's 1 s scan), so they stay on one thread.
 */
export const SPECTRAL_THREAD_MIN_SECONDS = 10;

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
