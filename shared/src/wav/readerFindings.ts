/**
 * Findings about the file itself rather than its audio: a data chunk shorter than claimed or whose size was
 * never written (both `truncated`), and float samples that were NaN/±Inf. The reader reports the facts; callers add these to the file's findings.
 */
import type { Finding } from "../types/report.ts";
import type { WavLayout } from "./wavLayout.ts";

export interface NonFiniteCount {
  nonFiniteSamples: number;
  firstNonFiniteFrame: number | null;
  lastNonFiniteFrame: number | null;
}

const seconds = (frames: number, rateHz: number): number => frames / rateHz;

export function readerFindings(
  layout: Pick<
    WavLayout,
    "isTruncated" | "isDataSizeUnwritten" | "claimedDataBytes" | "dataBytes" | "totalFrames" | "sampleRateHz" | "blockAlign"
  > &
    Partial<Pick<WavLayout, "trailingBytes" | "container">>,
  decoded: NonFiniteCount,
): Finding[] {
  const findings: Finding[] = [];
  if (layout.totalFrames === 0) {
    // Nothing was measured, so nothing can pass: every level would read as silence.
    findings.push({
      code: "no-audio",
      severity: "fail",
      channel: null,
      startSeconds: null,
      endSeconds: null,
      message: `the file holds no audio: 0 sample frames (${layout.dataBytes} bytes of sample data)`,
    });
  }
  if ((layout.trailingBytes ?? 0) > 0) {
    const where = layout.container === "flac" ? "the last audio frame" : "the last chunk";
    findings.push({
      code: "trailing-data",
      severity: "warn",
      channel: null,
      startSeconds: null,
      endSeconds: null,
      message: `${layout.trailingBytes} byte(s) after ${where} belong to no chunk: appended or left over from a longer file, not measured`,
    });
  }
  if (layout.isDataSizeUnwritten) {
    // Measured to the end of the file, but how much is missing cannot be known: the finding ends where the audio does.
    const presentSeconds = seconds(layout.totalFrames, layout.sampleRateHz);
    const field = layout.claimedDataBytes === 0xffffffff ? "0xFFFFFFFF" : String(layout.claimedDataBytes);
    findings.push({
      code: "truncated",
      severity: "fail",
      channel: null,
      startSeconds: presentSeconds,
      endSeconds: presentSeconds,
      message:
        `data chunk size field holds ${field}, never filled in (recording not closed properly): ` +
        `${presentSeconds.toFixed(3)} s measured to the end of the file; its end may be missing`,
    });
  } else if (layout.isTruncated) {
    const claimedFrames = Math.floor(layout.claimedDataBytes / layout.blockAlign);
    const presentSeconds = seconds(layout.totalFrames, layout.sampleRateHz);
    findings.push({
      code: "truncated",
      severity: "fail",
      channel: null,
      startSeconds: presentSeconds,
      endSeconds: seconds(claimedFrames, layout.sampleRateHz),
      message:
        `data chunk claims ${layout.claimedDataBytes} bytes but the file holds ${layout.dataBytes}: ` +
        `${presentSeconds.toFixed(3)} s of ${seconds(claimedFrames, layout.sampleRateHz).toFixed(3)} s present, measured on what is there`,
    });
  }
  if (decoded.nonFiniteSamples > 0) {
    const first = decoded.firstNonFiniteFrame ?? 0;
    const last = decoded.lastNonFiniteFrame ?? first;
    findings.push({
      code: "non-finite-samples",
      severity: "fail",
      channel: null,
      startSeconds: seconds(first, layout.sampleRateHz),
      endSeconds: seconds(last + 1, layout.sampleRateHz),
      message:
        `${decoded.nonFiniteSamples} float sample(s) were NaN, ±Infinity or beyond float range, replaced by 0 ` +
        `(first at ${seconds(first, layout.sampleRateHz).toFixed(3)} s, last at ${seconds(last, layout.sampleRateHz).toFixed(3)} s)`,
    });
  }
  return findings;
}
