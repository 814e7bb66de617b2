/** Where a file's PNGs go under --spectrograms: the folder tree mirrored, the waveform strip beside. */
import path from "node:path";

export interface SpectrogramTarget {
  /** Where PNGs are written. */
  dirAbs: string;
  /** The folder as the user gave it (forward slashes): the report's `spectrogram` paths start with it. */
  dirShown: string;
}

export function spectrogramPaths(target: SpectrogramTarget, relPath: string): { png: string; waveform: string; shown: string } {
  const png = path.join(target.dirAbs, ...relPath.split("/")) + ".png";
  return { png, waveform: png.replace(/\.png$/, ".waveform.png"), shown: `${target.dirShown}/${relPath}.png` };
}

/**
 * Where a file's other artefacts go (issue #16): beside its spectrogram PNG, named by a suffix
 * (".levels.json", ".closeup-1.png" …), with the same shown-path rule.
 */
export function artefactPaths(target: SpectrogramTarget, relPath: string): { abs(suffix: string): string; shown(suffix: string): string } {
  const base = path.join(target.dirAbs, ...relPath.split("/"));
  return { abs: (suffix) => base + suffix, shown: (suffix) => `${target.dirShown}/${relPath}${suffix}` };
}
