/** Checks a file's format against a profile's demands: one `format-mismatch` finding per broken demand. */
import type { AudioFormat, Finding, Severity } from "../types/report.ts";
import type { FormatDemands } from "./profileSchema.ts";

const list = (values: readonly (string | number)[]): string => values.join(", ");

export function formatMismatches(format: AudioFormat, demands: FormatDemands, severity: Severity): Finding[] {
  const problems: string[] = [];
  if (demands.encodings && !demands.encodings.includes(format.encoding)) {
    problems.push(`encoding ${format.encoding}, expected ${list(demands.encodings)}`);
  }
  if (demands.containers && !demands.containers.includes(format.container)) {
    problems.push(`container ${format.container}, expected ${list(demands.containers)}`);
  }
  if (demands.sampleRatesHz && !demands.sampleRatesHz.includes(format.sampleRateHz)) {
    problems.push(`sample rate ${format.sampleRateHz} Hz, expected ${list(demands.sampleRatesHz)} Hz`);
  }
  if (demands.minSampleRateHz !== undefined && format.sampleRateHz < demands.minSampleRateHz) {
    problems.push(`sample rate ${format.sampleRateHz} Hz, expected at least ${demands.minSampleRateHz} Hz`);
  }
  if (demands.bitDepths && !demands.bitDepths.includes(format.bitDepth)) {
    problems.push(`bit depth ${format.bitDepth}, expected ${list(demands.bitDepths)}`);
  }
  if (demands.minBitDepth !== undefined && format.bitDepth < demands.minBitDepth) {
    problems.push(`bit depth ${format.bitDepth}, expected at least ${demands.minBitDepth}`);
  }
  if (demands.channels && !demands.channels.includes(format.channels)) {
    problems.push(`${format.channels} channel(s), expected ${list(demands.channels)}`);
  }
  return problems.map((message) => ({
    code: "format-mismatch",
    severity,
    channel: null,
    startSeconds: null,
    endSeconds: null,
    message,
  }));
}
