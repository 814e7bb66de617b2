/** RIFF `LIST` chunks of type `INFO` (INAM, ICMT, ICRD…), per the Microsoft RIFF specification (1991), 3-57. */
import { decodeTextField, isPrintableFourCC, readFourCC, readUint32 } from "./bytes.ts";

/** Bound on entries kept from one file, so a hostile LIST cannot grow the report without limit. */
export const MAX_INFO_ENTRIES = 256;

/** Adds the INFO entries of one LIST body (including its 4-byte list type) to `into`. Other list types are ignored. */
export function parseListInfoChunk(body: Uint8Array, into: Record<string, string>): void {
  if (body.length < 4 || readFourCC(body, 0) !== "INFO") return;
  let at = 4;
  while (at + 8 <= body.length && Object.keys(into).length < MAX_INFO_ENTRIES) {
    if (!isPrintableFourCC(body, at)) return;
    const id = readFourCC(body, at);
    const size = readUint32(body, at + 4);
    const start = at + 8;
    const end = Math.min(body.length, start + size);
    const text = decodeTextField(body.subarray(start, end));
    if (text.length > 0 && !(id in into)) into[id] = text;
    at = start + size + (size & 1);
  }
}
