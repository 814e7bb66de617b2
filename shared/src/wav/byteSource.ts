/**
 * Random access to a file's bytes without loading it: the CLI backs it with positioned reads,
 * tests and the browser with an in-memory array.
 */
export interface ByteSource {
  /** Total size of the file in bytes (up to 2^53). */
  sizeBytes: number;
  /** Up to `length` bytes at `offset`; fewer only where the source ends. */
  readAt(offset: number, length: number): Promise<Uint8Array>;
}

export function byteSourceFromBytes(bytes: Uint8Array): ByteSource {
  return {
    sizeBytes: bytes.length,
    readAt: async (offset, length) => bytes.subarray(offset, Math.min(bytes.length, offset + length)),
  };
}

/**
 * Serves reads inside the file's first `headBytes` from one read made up front, so walking a typical
 * header (fmt, bext, LIST, iXML before data) costs a single I/O.
 */
export async function createHeaderReader(source: ByteSource, headBytes: number): Promise<ByteSource> {
  const head = await source.readAt(0, Math.min(source.sizeBytes, headBytes));
  return {
    sizeBytes: source.sizeBytes,
    readAt: async (offset, length) => {
      const end = Math.min(source.sizeBytes, offset + length);
      if (end <= head.length) return head.subarray(offset, end);
      return source.readAt(offset, end - offset);
    },
  };
}
