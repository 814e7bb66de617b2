/**
 * Which findings get a close-up, decided once the findings are judged (issue #16). Most severe first
 * (then earliest): each finding's window is `beforeSeconds` before its start to `afterSeconds` after its
 * end, never longer than `maxSeconds` (a longer finding shows its first maxSeconds), clipped to the file.
 * A finding already inside a chosen close-up joins it. Omitted, with the report saying why:
 * - "not-timed": no start time, or a span over the whole file (dual mono, padded bit depth …): nothing to zoom into;
 * - "cap": the file already has `cap` close-ups;
 * - "budget": its samples were not kept (the bounded look-back of the single pass, closeupCapture.ts) or its
 *   files would take the file past `budgetBytes` (estimated before they are written).
 */
import type { CloseupOmitted, Finding, Severity } from "../types/report.ts";
import type { CloseupSettings } from "../types/settings.ts";
import type { CapturedSegment } from "./closeupCapture.ts";

const SEVERITY_ORDER: Record<Severity, number> = { fail: 3, warn: 2, info: 1 };

/** Rough size of one close-up's two PNGs (they compress the smooth spectrogram well; measured ≈ 100–250 kB). */
export const CLOSEUP_IMAGE_BYTES_ESTIMATE = 300_000;

export interface CloseupPlan {
  /** Indexes of the findings it shows, ascending. */
  findings: number[];
  startFrame: number;
  endFrame: number;
  /** The window's samples (views into a captured segment). */
  channels: Float32Array[];
}

export interface CloseupSelection {
  plans: CloseupPlan[];
  omitted: CloseupOmitted[];
}

export interface SelectionInput {
  findings: readonly Finding[];
  segments: readonly CapturedSegment[];
  settings: CloseupSettings;
  sampleRateHz: number;
  totalFrames: number;
  /** Bytes a sample takes in the excerpt (for the budget estimate). */
  excerptBytesPerSample: number;
  imageBytesEstimate?: number;
}

export function selectCloseups(input: SelectionInput): CloseupSelection {
  const { findings, segments, settings, sampleRateHz: rate, totalFrames } = input;
  const order = findings
    .map((_, i) => i)
    .sort((a, b) => SEVERITY_ORDER[findings[b].severity] - SEVERITY_ORDER[findings[a].severity] || (findings[a].startSeconds ?? 0) - (findings[b].startSeconds ?? 0) || a - b);
  const plans: CloseupPlan[] = [];
  const omitted: CloseupOmitted[] = [];
  const before = Math.round(settings.beforeSeconds * rate);
  const after = Math.round(settings.afterSeconds * rate);
  const maxFrames = Math.max(1, Math.round(settings.maxSeconds * rate));
  const channels = segments[0]?.channels.length ?? 0;
  let bytesUsed = 0;

  for (const index of order) {
    const f = findings[index];
    if (f.startSeconds === null || totalFrames === 0) {
      omitted.push({ finding: index, reason: "not-timed" });
      continue;
    }
    const s = Math.min(totalFrames, Math.round(f.startSeconds * rate));
    const e = Math.min(totalFrames, Math.max(s, Math.round((f.endSeconds ?? f.startSeconds) * rate)));
    if (s <= 0 && e >= totalFrames - 1 && totalFrames > 1) {
      omitted.push({ finding: index, reason: "not-timed" });
      continue;
    }
    const joined = plans.find((p) => p.startFrame <= s && e <= p.endFrame);
    if (joined) {
      joined.findings.push(index);
      continue;
    }
    if (plans.length >= settings.cap) {
      omitted.push({ finding: index, reason: "cap" });
      continue;
    }
    let windowStart = Math.max(0, s - before);
    let windowEnd = Math.min(totalFrames, windowStart + maxFrames, e + after);
    if (windowEnd <= windowStart) windowEnd = Math.min(totalFrames, windowStart + 1);
    // A segment holding the whole window, or else one holding the finding's start (the window shrinks to it).
    let seg = segments.find((g) => g.startFrame <= windowStart && g.startFrame + g.channels[0].length >= windowEnd);
    if (!seg) {
      seg = segments.find((g) => g.startFrame <= s && s < g.startFrame + g.channels[0].length);
      if (seg) {
        windowStart = Math.max(windowStart, seg.startFrame);
        windowEnd = Math.min(windowEnd, seg.startFrame + seg.channels[0].length);
      }
    }
    const bytes = (windowEnd - windowStart) * channels * input.excerptBytesPerSample + (input.imageBytesEstimate ?? CLOSEUP_IMAGE_BYTES_ESTIMATE);
    if (!seg || bytesUsed + bytes > settings.budgetBytes) {
      omitted.push({ finding: index, reason: "budget" });
      continue;
    }
    bytesUsed += bytes;
    const from = windowStart - seg.startFrame;
    plans.push({
      findings: [index],
      startFrame: windowStart,
      endFrame: windowEnd,
      channels: seg.channels.map((x) => x.subarray(from, from + windowEnd - windowStart)),
    });
  }
  for (const p of plans) p.findings.sort((a, b) => a - b);
  omitted.sort((a, b) => a.finding - b.finding);
  return { plans: plans.sort((a, b) => a.startFrame - b.startFrame), omitted };
}
