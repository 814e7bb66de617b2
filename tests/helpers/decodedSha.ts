import { createHash } from "node:crypto";
import { readAudioFile } from "../../cli/src/audio/readAudioFile.ts";

/** SHA-256 per channel of the decoded float32 samples, independent of how they were cut into blocks. */
export async function decodedSha(p: string): Promise<string[]> {
  const hashes: ReturnType<typeof createHash>[] = [];
  await readAudioFile(p, {
    onOpen: (info) => {
      for (let c = 0; c < info.stream.channels; c++) hashes.push(createHash("sha256"));
      return (block) => {
        for (let c = 0; c < hashes.length; c++) {
          const x = block.channels[c].subarray(0, block.frames);
          hashes[c].update(new Uint8Array(x.buffer, x.byteOffset, x.byteLength));
        }
      };
    },
  });
  return hashes.map((h) => h.digest("hex"));
}
