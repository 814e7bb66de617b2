/**
 * Scan progress on stderr: an ora spinner with file n/total, the current file and the realtime factor
 * (seconds of audio measured per second of wall time). Only on a terminal, and never with --quiet; ora is
 * imported only then (it and its dependencies cost ≈ 60 ms of start-up), so the spinner appears a moment
 * after the scan starts.
 */
import type { Ora } from "ora";

export interface ScanProgress {
  fileStarted(relPath: string): void;
  fileDone(relPath: string, audioSeconds: number): void;
  /** Prints a line above the spinner (warnings), or plainly when there is no spinner. */
  note(line: string): void;
  stop(): void;
}

export interface ProgressOptions {
  total: number;
  /** Files skipped by --resume count as done from the start. */
  alreadyDone: number;
  stream: NodeJS.WritableStream & { isTTY?: boolean; columns?: number };
  enabled: boolean;
}

export function realtimeFactor(audioSeconds: number, wallSeconds: number): number {
  return wallSeconds > 0 ? audioSeconds / wallSeconds : 0;
}

export function progressText(done: number, total: number, current: string | null, factor: number): string {
  const rate = factor > 0 ? `  ${factor >= 10 ? factor.toFixed(0) : factor.toFixed(1)}x realtime` : "";
  return `${done}/${total}${current ? `  ${current}` : ""}${rate}`;
}

/** Shortens from the middle of the text (keeping n/total and the rate), with an ellipsis. */
export function fitWidth(text: string, width: number): string {
  if (text.length <= width) return text;
  if (width <= 1) return "";
  const keep = width - 1;
  const head = Math.ceil(keep / 2);
  return `${text.slice(0, head)}…${text.slice(text.length - (keep - head))}`;
}

export function createScanProgress(options: ProgressOptions): ScanProgress {
  const startedMs = performance.now();
  let done = options.alreadyDone;
  let audioSeconds = 0;
  const inFlight: string[] = [];
  // A terminal of unknown width (columns 0, e.g. under `script`) would make ora clear unbounded lines.
  const columns = options.stream.columns ?? 0;
  let spinner: Ora | null = null;
  let isStopped = false;
  if (options.enabled && options.stream.isTTY && columns > 0) {
    void import("ora").then(({ default: ora }) => {
      if (isStopped) return;
      spinner = ora({ stream: options.stream, discardStdin: false, hideCursor: true }).start();
      refresh();
    });
  }

  const refresh = (): void => {
    if (!spinner) return;
    const factor = realtimeFactor(audioSeconds, (performance.now() - startedMs) / 1000);
    // One line only: the spinner glyph and a space take two columns.
    spinner.text = fitWidth(progressText(done, options.total, inFlight[0] ?? null, factor), columns - 3);
  };
  refresh();

  return {
    fileStarted(relPath) {
      inFlight.push(relPath);
      refresh();
    },
    fileDone(relPath, seconds) {
      const i = inFlight.indexOf(relPath);
      if (i >= 0) inFlight.splice(i, 1);
      done += 1;
      audioSeconds += seconds;
      refresh();
    },
    note(line) {
      if (spinner) {
        spinner.clear();
        options.stream.write(`${line}\n`);
        spinner.render();
      } else {
        options.stream.write(`${line}\n`);
      }
    },
    stop() {
      isStopped = true;
      spinner?.stop();
    },
  };
}
