/**
 * Ids for pg-boss jobs that sort in the order they were made (UUID version 7 layout, RFC 9562 §5.7:
 * 48-bit Unix milliseconds, then a counter in rand_a, then random bits). pg-boss hands out jobs of equal
 * priority by created_on and then id, and one enqueue request inserts all its jobs at the same instant,
 * so without this a run's files would be scanned in random order rather than the crawl's.
 */
import { randomBytes } from "node:crypto";

let lastMs = 0;
let counter = 0;

export function orderedJobId(now = Date.now()): string {
  if (now > lastMs) {
    lastMs = now;
    counter = 0;
  } else if (++counter > 0xfff) {
    // 4096 ids in one millisecond: borrow the next millisecond rather than lose the order.
    lastMs += 1;
    counter = 0;
  }
  const bytes = randomBytes(16);
  let ms = lastMs;
  for (let i = 5; i >= 0; i--) {
    bytes[i] = ms % 256;
    ms = Math.floor(ms / 256);
  }
  bytes[6] = 0x70 | (counter >> 8);
  bytes[7] = counter & 0xff;
  bytes[8] = 0x80 | (bytes[8] & 0x3f);
  const hex = bytes.toString("hex");
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
}
