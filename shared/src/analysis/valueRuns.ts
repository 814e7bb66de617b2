/**
 * Runs of identical consecutive sample values per channel: the raw material of dropouts (runs of exact
 * zero) and stuck samples (runs of one non-zero value). One comparison per sample; runs shorter than
 * `minLength` are never reported.
 */

export interface ValueRun {
  channel: number;
  value: number;
  startFrame: number;
  length: number;
  /** The samples just before and after the run; null at the start or end of the stream. */
  before: number | null;
  after: number | null;
}

export interface ValueRunTracker {
  push(input: Float32Array[], frames: number): void;
  /** Reports the runs still open at the end of the stream (with `after` null). */
  finish(): void;
}

export function createValueRunTracker(channels: number, minLength: number, onRun: (run: ValueRun) => void): ValueRunTracker {
  // Per channel: the current run's value (NaN before the first sample), its start, and the value before it.
  const value = new Float64Array(channels).fill(NaN);
  const start = new Float64Array(channels);
  const before = new Float64Array(channels).fill(NaN);
  let position = 0;
  const report = (c: number, runValue: number, runStart: number, end: number, previous: number, after: number | null) => {
    onRun({
      channel: c,
      value: runValue,
      startFrame: runStart,
      length: end - runStart,
      before: Number.isNaN(previous) ? null : previous,
      after,
    });
  };
  return {
    push(input, frames) {
      for (let c = 0; c < channels; c++) {
        const x = input[c];
        let prev = value[c];
        let runStart = start[c];
        let previous = before[c];
        for (let i = 0; i < frames; i++) {
          const v = x[i];
          if (v !== prev) {
            const end = position + i;
            if (end - runStart >= minLength && !Number.isNaN(prev)) report(c, prev, runStart, end, previous, v);
            previous = prev;
            prev = v;
            runStart = end;
          }
        }
        value[c] = prev;
        start[c] = runStart;
        before[c] = previous;
      }
      position += frames;
    },
    finish() {
      for (let c = 0; c < channels; c++) {
        if (position - start[c] >= minLength && !Number.isNaN(value[c])) report(c, value[c], start[c], position, before[c], null);
      }
    },
  };
}
