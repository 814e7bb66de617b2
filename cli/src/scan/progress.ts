/**
 * Progress on stderr for scan, verify and worker. Counted in bytes as well as files, so a 3-hour file moves
 * the display while it is read, and the batch ETA comes from the bytes left at the measured rate.
 * - auto: an ora spinner line, only on a terminal and never with --quiet. ora is imported only then (it and
 *   its dependencies cost ≈ 60 ms of start-up), so the spinner appears a moment after the work starts.
 * - json: one JSON object a line (`{"event":"progress",…}`, `{"event":"note",…}`, `{"event":"done",…}`),
 *   written whether or not stderr is a terminal, for pipelines; at most one progress line a second.
 */
import type { Ora } from "ora";

export interface ScanProgress {
  /** More work than the totals said: a worker learns of its files one claimed job at a time. */
  grow(files: number, bytes: number): void;
  fileStarted(relPath: string): void;
  /** Bytes of `relPath` read so far (within-file progress). */
  fileBytes(relPath: string, bytesRead: number): void;
  fileDone(relPath: string, audioSeconds: number, sizeBytes: number): void;
  /** Prints a line above the spinner (warnings), or plainly when there is no spinner. */
  note(line: string): void;
  stop(): void;
}

export type ProgressDisplay = "off" | "auto" | "json";

export interface ProgressOptions {
  total: number;
  totalBytes: number;
  /** Files skipped by --resume count as done from the start. */
  alreadyDone: number;
  alreadyDoneBytes?: number;
  stream: NodeJS.WritableStream & { isTTY?: boolean; columns?: number };
  display: ProgressDisplay;
  /** Injected in tests. */
  now?: () => number;
}

export interface ProgressState {
  done: number;
  total: number;
  bytesDone: number;
  totalBytes: number;
  current: string | null;
  /** Seconds of audio per wall second; 0 when unknown (verify). */
  factor: number;
  etaSeconds: number | null;
}

export function realtimeFactor(audioSeconds: number, wallSeconds: number): number {
  return wallSeconds > 0 ? audioSeconds / wallSeconds : 0;
}

/** Needs a second of history: the first reads of a batch say little about its rate. */
const MIN_SECONDS_FOR_ETA = 1;

/** Seconds left at the rate measured so far (bytes of this run only, not those taken from --resume). */
export function estimateEta(bytesThisRun: number, bytesLeft: number, elapsedSeconds: number): number | null {
  if (elapsedSeconds < MIN_SECONDS_FOR_ETA || bytesThisRun <= 0) return null;
  return bytesLeft <= 0 ? 0 : bytesLeft / (bytesThisRun / elapsedSeconds);
}

export function formatEta(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = s % 60;
  return h > 0 ? `${h}:${String(m).padStart(2, "0")}:${String(sec).padStart(2, "0")}` : `${m}:${String(sec).padStart(2, "0")}`;
}

export function progressText(s: ProgressState): string {
  const percent = s.totalBytes > 0 ? `  ${Math.min(100, Math.floor((100 * s.bytesDone) / s.totalBytes))}%` : "";
  const eta = s.etaSeconds === null ? "" : `  ETA ${formatEta(s.etaSeconds)}`;
  const rate = s.factor > 0 ? `  ${s.factor >= 10 ? s.factor.toFixed(0) : s.factor.toFixed(1)}x realtime` : "";
  return `${s.done}/${s.total}${percent}${eta}${s.current ? `  ${s.current}` : ""}${rate}`;
}

/** Shortens from the middle of the text (keeping n/total and the rate), with an ellipsis. */
export function fitWidth(text: string, width: number): string {
  if (text.length <= width) return text;
  if (width <= 1) return "";
  const keep = width - 1;
  const head = Math.ceil(keep / 2);
  return `${text.slice(0, head)}…${text.slice(text.length - (keep - head))}`;
}

const JSON_INTERVAL_MS = 1000;

export function createScanProgress(options: ProgressOptions): ScanProgress {
  const now = options.now ?? (() => performance.now());
  const startedMs = now();
  const startBytes = options.alreadyDoneBytes ?? 0;
  let total = options.total;
  let totalBytes = options.totalBytes;
  let done = options.alreadyDone;
  let doneBytes = startBytes;
  let audioSeconds = 0;
  const inFlight = new Map<string, number>();
  // A terminal of unknown width (columns 0, e.g. under `script`) would make ora clear unbounded lines.
  const columns = options.stream.columns ?? 0;
  let spinner: Ora | null = null;
  let isStopped = false;
  let lastJsonMs = -Infinity;
  const json = options.display === "json";

  const state = (): ProgressState => {
    let bytesDone = doneBytes;
    for (const b of inFlight.values()) bytesDone += b;
    const elapsed = (now() - startedMs) / 1000;
    return {
      done,
      total,
      bytesDone,
      totalBytes,
      current: inFlight.keys().next().value ?? null,
      factor: realtimeFactor(audioSeconds, elapsed),
      etaSeconds: estimateEta(bytesDone - startBytes, totalBytes - bytesDone, elapsed),
    };
  };

  const writeJson = (record: Record<string, unknown>): void => void options.stream.write(`${JSON.stringify(record)}\n`);

  const refresh = (force = false): void => {
    if (json) {
      const t = now();
      if (!force && t - lastJsonMs < JSON_INTERVAL_MS) return;
      lastJsonMs = t;
      const s = state();
      writeJson({ event: "progress", filesDone: s.done, files: s.total, bytesDone: s.bytesDone, bytes: s.totalBytes, etaSeconds: s.etaSeconds === null ? null : Math.round(s.etaSeconds), current: s.current });
      return;
    }
    if (!spinner) return;
    // One line only: the spinner glyph and a space take two columns.
    spinner.text = fitWidth(progressText(state()), columns - 3);
  };

  if (options.display === "auto" && options.stream.isTTY && columns > 0) {
    void import("ora").then(({ default: ora }) => {
      if (isStopped) return;
      spinner = ora({ stream: options.stream, discardStdin: false, hideCursor: true }).start();
      refresh();
    });
  }
  // Spinner text is cheap, JSON lines are throttled: a timer keeps the ETA moving between reads.
  const ticker = options.display === "off" ? null : setInterval(() => refresh(), 500);
  ticker?.unref();
  refresh(true);

  return {
    grow(files, bytes) {
      total += files;
      totalBytes += bytes;
    },
    fileStarted(relPath) {
      inFlight.set(relPath, 0);
      refresh();
    },
    fileBytes(relPath, bytesRead) {
      if (!inFlight.has(relPath)) return;
      inFlight.set(relPath, bytesRead);
      refresh();
    },
    fileDone(relPath, seconds, sizeBytes) {
      inFlight.delete(relPath);
      done += 1;
      doneBytes += sizeBytes;
      audioSeconds += seconds;
      refresh();
    },
    note(line) {
      if (json) writeJson({ event: "note", message: line.replace(/^tidemark: /, "") });
      else if (spinner) {
        spinner.clear();
        options.stream.write(`${line}\n`);
        spinner.render();
      } else {
        // Warnings are shown even with --quiet: only the live display is silenced.
        options.stream.write(`${line}\n`);
      }
    },
    stop() {
      if (isStopped) return;
      isStopped = true;
      if (ticker) clearInterval(ticker);
      if (json) {
        const s = state();
        writeJson({ event: "done", filesDone: s.done, files: s.total, bytesDone: s.bytesDone, bytes: s.totalBytes, seconds: Math.round((now() - startedMs) / 100) / 10 });
      }
      spinner?.stop();
    },
  };
}

/** The display a command's --quiet and --progress ask for. */
export function progressDisplay(quiet: boolean, mode: "auto" | "json"): ProgressDisplay {
  return quiet ? "off" : mode;
}
