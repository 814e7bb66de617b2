/** Fingerprints one audio file with the scan's reader and the shared fingerprinter (one read). */
import { createFingerprinter, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import type { BlockAnalyser } from "@tidemark/shared/types/analysis";
import { readAudioFile } from "../audio/readAudioFile.ts";
import { oneLine, UsageError } from "../errors.ts";
import { displayPath, type FsPath } from "../scan/rawPath.ts";

export async function fingerprintAudioFile(absPath: FsPath, shownPath: string): Promise<Fingerprint> {
  let fingerprinter: BlockAnalyser<Fingerprint> | null = null;
  try {
    await readAudioFile(absPath, {
      onOpen: (info) => {
        const f = createFingerprinter(info.stream);
        fingerprinter = f;
        return (block) => f.push(block);
      },
    });
  } catch (error) {
    const code = (error as { code?: string }).code;
    if (code === "ENOENT" || code === "not-found") throw new UsageError(`file not found: ${shownPath}`);
    throw new UsageError(`cannot fingerprint ${shownPath}: ${oneLine(error).split(displayPath(absPath)).join(shownPath)}`);
  }
  if (!fingerprinter) throw new UsageError(`cannot fingerprint ${shownPath}: the audio stream was never opened`);
  return (fingerprinter as BlockAnalyser<Fingerprint>).finish();
}
