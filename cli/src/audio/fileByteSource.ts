/** A ByteSource over an open file: small positioned reads for header walking. */
import type { FileHandle } from "node:fs/promises";
import type { ByteSource } from "@tidemark/shared/wav/byteSource";

export function fileByteSource(handle: FileHandle, sizeBytes: number): ByteSource {
  return {
    sizeBytes,
    async readAt(offset, length) {
      const wanted = Math.max(0, Math.min(length, sizeBytes - offset));
      const buffer = new Uint8Array(wanted);
      let filled = 0;
      // A positioned read may return fewer bytes than asked; loop until done or the file ends.
      while (filled < wanted) {
        const { bytesRead } = await handle.read(buffer, filled, wanted - filled, offset + filled);
        if (bytesRead === 0) break;
        filled += bytesRead;
      }
      return filled === wanted ? buffer : buffer.subarray(0, filled);
    },
  };
}
