/**
 * FLAC frames built bit by bit from RFC 9639 (section 9), for tests of the odd-depth rewrite: a writer, the
 * CRCs computed bitwise (independently of the framer's tables), and subframes of each type with both residual
 * methods, Rice parameters and escaped partitions.
 */
export class Bits {
  bits: number[] = [];
  put(v: number, n: number): this {
    for (let i = n - 1; i >= 0; i--) this.bits.push(Math.floor(v / 2 ** i) % 2);
    return this;
  }
  /** Two's complement in n bits. */
  signed(v: number, n: number): this {
    return this.put(v < 0 ? v + 2 ** n : v, n);
  }
  unary(zeros: number): this {
    for (let i = 0; i < zeros; i++) this.bits.push(0);
    this.bits.push(1);
    return this;
  }
  bytes(): number[] {
    while (this.bits.length % 8) this.bits.push(0);
    const out: number[] = [];
    for (let i = 0; i < this.bits.length; i += 8) out.push(parseInt(this.bits.slice(i, i + 8).join(""), 2));
    return out;
  }
}

/** RFC 9639, 9.1.8 and 9.3, bit by bit: CRC-8 poly 0x07, CRC-16 poly 0x8005, MSB first, initial 0. */
export function crc(bytes: number[], width: 8 | 16, poly: number): number {
  let c = 0;
  const top = 1 << (width - 1);
  const mask = (1 << width) - 1;
  for (const b of bytes) {
    c ^= b << (width - 8);
    for (let k = 0; k < 8; k++) c = c & top ? ((c << 1) ^ poly) & mask : (c << 1) & mask;
  }
  return c;
}

export interface Sub {
  /** Wasted bits as coded in the original frame. */
  k: number;
  /** Body writer at n = subframe bits − k. */
  type: number;
  body: (w: Bits, n: number) => void;
}

export function residual(w: Bits, method: 0 | 1, partitionOrder: number, parts: ({ rice: number; values: number[] } | { escape: number; values: number[] })[]): void {
  w.put(method, 2).put(partitionOrder, 4);
  const pb = method === 0 ? 4 : 5;
  for (const p of parts) {
    if ("escape" in p) {
      w.put(method === 0 ? 15 : 31, pb).put(p.escape, 5);
      for (const v of p.values) w.signed(v, p.escape);
    } else {
      w.put(p.rice, pb);
      for (const v of p.values) {
        const u = v >= 0 ? 2 * v : -2 * v - 1; // zigzag (RFC 9639, 9.2.7.3)
        w.unary(Math.floor(u / 2 ** p.rice)).put(u % 2 ** p.rice, p.rice);
      }
    }
  }
}

export const BLOCK = 16;
export const SIZE_CODE: Record<number, number> = { 8: 1, 12: 2, 16: 4, 20: 5, 24: 6, 32: 7 };

/** A whole frame: fixed block size 16 (code 6, one byte), 48 kHz (code 10), frame `number` (< 128: one byte). */
export function frame(sizeCode: number, channelCode: number, bps: number, subs: Sub[], extraK = 0, number = 0): Uint8Array {
  const head = [0xff, 0xf8, (6 << 4) | 10, (channelCode << 4) | (sizeCode << 1), number, BLOCK - 1];
  head.push(crc(head, 8, 0x07));
  const side = channelCode === 8 || channelCode === 10 ? 1 : channelCode === 9 ? 0 : -1;
  const w = new Bits();
  for (const b of head) w.put(b, 8);
  subs.forEach((s, c) => {
    const k = s.k + extraK;
    w.put(0, 1).put(s.type, 6);
    if (k > 0) w.put(1, 1).unary(k - 1);
    else w.put(0, 1);
    s.body(w, bps + (c === side ? 1 : 0) - s.k);
  });
  const bytes = w.bytes();
  const c16 = crc(bytes, 16, 0x8005);
  return Uint8Array.from([...bytes, c16 >> 8, c16 & 0xff]);
}

export const constant = (k: number, v: number): Sub => ({ k, type: 0, body: (w, n) => void w.signed(v, n) });
export const verbatim = (k: number, seed: number): Sub => ({
  k, type: 1, body: (w, n) => { for (let i = 0; i < BLOCK; i++) w.signed(((i * 7919 + seed) % 2 ** (n - 2)) - 2 ** (n - 3), n); },
});
/** FIXED order 2, method 0, two partitions: Rice 3, then escaped at 7 bits. */
export const fixed = (k: number): Sub => ({
  k, type: 8 + 2, body: (w, n) => {
    w.signed(5, n).signed(-3, n);
    residual(w, 0, 1, [{ rice: 3, values: [1, -2, 9, 0, 4, -7] }, { escape: 7, values: [63, -64, 0, 1, -1, 20, -20, 5] }]);
  },
});
/** LPC order 3, precision 12, shift 9, method 1 (5-bit parameters, escape 31), one partition of order 0 tested too. */
export const lpc = (k: number, escape: boolean): Sub => ({
  k, type: 32 + 3 - 1, body: (w, n) => {
    w.signed(100, n).signed(-50, n).signed(25, n);
    w.put(11, 4).put(9, 5).signed(1000, 12).signed(-512, 12).signed(77, 12);
    const values = [0, 1, -1, 300, -300, 2, 17, -18, 1, 0, 0, 5, -5];
    residual(w, 1, 0, [escape ? { escape: 10, values } : { rice: 17, values }]);
  },
});
/** FIXED order 0 with no residual bits at all: escape width 0 (RFC 9639, 9.2.7.1). */
export const zeroEscape = (k: number): Sub => ({ k, type: 8, body: (w) => residual(w, 0, 2, [0, 1, 2, 3].map(() => ({ escape: 0, values: [0, 0, 0, 0] }))) });

