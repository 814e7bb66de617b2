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
