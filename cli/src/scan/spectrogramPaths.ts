/**
 * Where a file's PNGs and other artefacts go under --spectrograms: the folder tree mirrored, each artefact
 * named by a suffix of the audio file's relative path. The suffixes are stated here only.
 */
import path from "node:path";

/** Suffixes of the whole-file artefacts (README.md › `--spectrograms`). */
export const ARTEFACT_SUFFIXES = {
  spectrogram: ".png",
  waveform: ".waveform.png",
  levelGrid: ".levels.json",
  loudnessCurve: ".loudness.json",
} as const;

/** A multichannel file's per-channel spectrogram (channel from 0): ".ch1.png" … */
export function channelSpectrogramSuffix(channel: number): string {
  return `.ch${channel + 1}.png`;
}

/** A close-up's artefacts (k from 0): ".closeup-1.png", ".closeup-1.waveform.png", ".closeup-1.wav" … */
export function closeupSuffixes(k: number): { spectrogram: string; waveform: string; excerpt: string } {
  const base = `.closeup-${k + 1}`;
  return { spectrogram: base + ARTEFACT_SUFFIXES.spectrogram, waveform: base + ARTEFACT_SUFFIXES.waveform, excerpt: `${base}.wav` };
}

/** A spectrogram PNG's path without its suffix (matched case-insensitively, as a report may have been moved). */
function stemOf(spectrogramPath: string): string {
  const suffix = ARTEFACT_SUFFIXES.spectrogram;
  return spectrogramPath.toLowerCase().endsWith(suffix) ? spectrogramPath.slice(0, -suffix.length) : spectrogramPath;
}

/** The waveform strip beside a spectrogram PNG (either as written or as shown in a report). */
export function waveformPathFor(spectrogramPath: string): string {
  return stemOf(spectrogramPath) + ARTEFACT_SUFFIXES.waveform;
}

/** A per-channel spectrogram beside the file's spectrogram PNG. */
export function channelSpectrogramPath(spectrogramPath: string, channel: number): string {
  return stemOf(spectrogramPath) + channelSpectrogramSuffix(channel);
}

export interface SpectrogramTarget {
  /** Where PNGs are written. */
  dirAbs: string;
  /** The folder as the user gave it (forward slashes): the report's `spectrogram` paths start with it. */
  dirShown: string;
}

export function spectrogramPaths(target: SpectrogramTarget, relPath: string): { png: string; waveform: string; shown: string } {
  const png = path.join(target.dirAbs, ...relPath.split("/")) + ARTEFACT_SUFFIXES.spectrogram;
  return { png, waveform: waveformPathFor(png), shown: `${target.dirShown}/${relPath}${ARTEFACT_SUFFIXES.spectrogram}` };
}

/**
 * Where a file's other artefacts go (issue #16): beside its spectrogram PNG, named by a suffix
 * (ARTEFACT_SUFFIXES, closeupSuffixes), with the same shown-path rule.
 */
export function artefactPaths(target: SpectrogramTarget, relPath: string): { abs(suffix: string): string; shown(suffix: string): string } {
  const base = path.join(target.dirAbs, ...relPath.split("/"));
  return { abs: (suffix) => base + suffix, shown: (suffix) => `${target.dirShown}/${relPath}${suffix}` };
}
