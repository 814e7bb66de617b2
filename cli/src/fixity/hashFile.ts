/** SHA-256 of a whole file, streamed in large reads (fixity checks: verify, resume). */
import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";

const READ_BYTES = 4 * 1024 * 1024;

export async function sha256OfFile(file: string): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of createReadStream(file, { highWaterMark: READ_BYTES })) hash.update(chunk as Buffer);
  return hash.digest("hex");
}
