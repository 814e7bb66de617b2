/** SHA-256 of a whole file, streamed in large reads (fixity checks: verify, resume). */
import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";

const READ_BYTES = 4 * 1024 * 1024;

/** `onRead` gets the bytes hashed so far after each read (progress within a long file). */
export async function sha256OfFile(file: string | Buffer, onRead?: (bytesRead: number) => void): Promise<string> {
  const hash = createHash("sha256");
  let read = 0;
  for await (const chunk of createReadStream(file, { highWaterMark: READ_BYTES })) {
    hash.update(chunk as Buffer);
    read += (chunk as Buffer).length;
    onRead?.(read);
  }
  return hash.digest("hex");
}
