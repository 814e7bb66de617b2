/**
 * Debian's ffmpeg as an independent loudness meter for cross-checks: runs its `ebur128` filter and
 * parses the summary it prints. Tests use `describe.runIf(ffmpegAvailable)`; the CI harness installs ffmpeg.
 */
import { spawnSync } from "node:child_process";
import { execa } from "execa";

export const ffmpegAvailable: boolean = (() => {
  const probe = spawnSync("ffmpeg", ["-hide_banner", "-version"], { stdio: "ignore" });
  return probe.status === 0;
})();

export interface FfmpegLoudness {
  integratedLufs: number;
  loudnessRangeLu: number;
  /** Max true peak over channels, dBTP (ffmpeg labels it dBFS). */
  truePeakDbtp: number;
}

function field(summary: string, label: string): number {
  const match = new RegExp(`${label}:\\s+(-?inf|[-+]?\\d+(?:\\.\\d+)?)`).exec(summary);
  if (!match) throw new Error(`ffmpeg ebur128 summary has no "${label}" line:\n${summary}`);
  return match[1] === "-inf" ? -Infinity : Number(match[1]);
}

/** Integrated loudness, loudness range and true peak of a file as ffmpeg's ebur128 filter measures them. */
export async function ffmpegEbur128(path: string): Promise<FfmpegLoudness> {
  const { stderr } = await execa("ffmpeg", ["-hide_banner", "-nostats", "-i", path, "-filter_complex", "ebur128=peak=true", "-f", "null", "-"]);
  const at = stderr.lastIndexOf("Summary:");
  if (at < 0) throw new Error(`ffmpeg printed no ebur128 summary:\n${stderr.slice(-2000)}`);
  const summary = stderr.slice(at);
  return {
    integratedLufs: field(summary, "I"),
    loudnessRangeLu: field(summary, "LRA"),
    truePeakDbtp: field(summary, "Peak"),
  };
}
