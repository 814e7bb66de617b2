/** Little-endian field readers and text decoding for RIFF headers (no DataView, no TextDecoder: shared/ is pure). */

export function readUint16(bytes: Uint8Array, at: number): number {
  return bytes[at] | (bytes[at + 1] << 8);
}

export function readUint32(bytes: Uint8Array, at: number): number {
  return (bytes[at] | (bytes[at + 1] << 8) | (bytes[at + 2] << 16)) + bytes[at + 3] * 0x1000000;
}

/** A 64-bit little-endian size as a number, or null when it exceeds 2^53 (not exactly representable). */
export function readUint64(bytes: Uint8Array, at: number): number | null {
  const low = readUint32(bytes, at);
  const high = readUint32(bytes, at + 4);
  if (high >= 0x200000) return null;
  return high * 0x100000000 + low;
}

/** Four bytes as a chunk id ("fmt ", "data"…). */
export function readFourCC(bytes: Uint8Array, at: number): string {
  return String.fromCharCode(bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3]);
}

/** RIFF chunk ids are four printable ASCII characters (spaces allowed). */
export function isPrintableFourCC(bytes: Uint8Array, at: number): boolean {
  for (let i = at; i < at + 4; i++) if (bytes[i] < 0x20 || bytes[i] > 0x7e) return false;
  return true;
}

/** Printable rendering of an id for error messages: "RIFX", or hex when the bytes are not text. */
export function describeFourCC(bytes: Uint8Array, at: number): string {
  if (isPrintableFourCC(bytes, at)) return `"${readFourCC(bytes, at)}"`;
  return Array.from(bytes.subarray(at, at + 4), (b) => b.toString(16).padStart(2, "0")).join(" ");
}

/**
 * A fixed-width text field (bext, INFO): stops at the first NUL, drops trailing spaces.
 * UTF-8 when the bytes are valid UTF-8, otherwise Latin-1 (EBU Tech 3285 asks for ASCII; real files vary).
 */
export function decodeTextField(bytes: Uint8Array): string {
  let end = bytes.indexOf(0);
  if (end < 0) end = bytes.length;
  const text = decodeUtf8OrLatin1(bytes.subarray(0, end));
  return text.replace(/[\s]+$/, "");
}

export function decodeUtf8OrLatin1(bytes: Uint8Array): string {
  return decodeUtf8(bytes) ?? decodeLatin1(bytes);
}

export function decodeLatin1(bytes: Uint8Array): string {
  let out = "";
  for (let i = 0; i < bytes.length; i += 4096) {
    out += String.fromCharCode(...bytes.subarray(i, Math.min(bytes.length, i + 4096)));
  }
  return out;
}

/** Strict UTF-8 decoding (RFC 3629); null when the bytes are not well-formed UTF-8. */
export function decodeUtf8(bytes: Uint8Array): string | null {
  const codePoints: number[] = [];
  let out = "";
  let i = 0;
  while (i < bytes.length) {
    const b0 = bytes[i];
    let cp: number;
    let extra: number;
    if (b0 < 0x80) {
      cp = b0;
      extra = 0;
    } else if (b0 >= 0xc2 && b0 < 0xe0) {
      cp = b0 & 0x1f;
      extra = 1;
    } else if (b0 >= 0xe0 && b0 < 0xf0) {
      cp = b0 & 0x0f;
      extra = 2;
    } else if (b0 >= 0xf0 && b0 < 0xf5) {
      cp = b0 & 0x07;
      extra = 3;
    } else return null;
    if (i + extra >= bytes.length && extra > 0) return null;
    for (let k = 1; k <= extra; k++) {
      const b = bytes[i + k];
      if ((b & 0xc0) !== 0x80) return null;
      cp = (cp << 6) | (b & 0x3f);
    }
    // Overlong forms, surrogates and values past U+10FFFF are not UTF-8 (RFC 3629, section 3).
    if ((extra === 2 && cp < 0x800) || (extra === 3 && (cp < 0x10000 || cp > 0x10ffff))) return null;
    if (cp >= 0xd800 && cp <= 0xdfff) return null;
    codePoints.push(cp);
    if (codePoints.length >= 4096) {
      out += String.fromCodePoint(...codePoints);
      codePoints.length = 0;
    }
    i += extra + 1;
  }
  return out + String.fromCodePoint(...codePoints);
}
