/** Fingerprints one audio file with the scan's reader and the shared fingerprinter (one read). */
import { createFingerprinter, type Fingerprint } from "@tidemark/shared/fingerprint/index";
import type { BlockAnalyser } from "@tidemark/shared/types/analysis";
import { readAudioFile } from "../audio/readAudioFile.ts";
import { oneLine, UsageError } from "../errors.ts";

export async function fingerprintAudioFile(absPath: string, shownPath: string): Promise<Fingerprint> {
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
    throw new UsageError(`cannot fingerprint ${shownPath}: ${oneLine(error).split(absPath).join(shownPath)}`);
  }
  if (!fingerprinter) throw new UsageError(`cannot fingerprint ${shownPath}: the audio stream was never opened`);
  return (fingerprinter as BlockAnalyser<Fingerprint>).finish();
}
