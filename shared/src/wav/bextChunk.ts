/** The BWF broadcast extension chunk `bext`, laid out per EBU Tech 3285 (v2), section 2.3. */
import type { BextMetadata } from "../types/report.ts";
import { decodeTextField, readUint16, readUint32 } from "./bytes.ts";

/** Fixed part before CodingHistory: 256+32+32+10+8+8+2+64+10+180 bytes (EBU Tech 3285, 2.3). */
export const BEXT_FIXED_BYTES = 602;
/** Through the Version field; anything shorter is not a usable bext chunk. */
const BEXT_MIN_BYTES = 348;

/** Hex of the UMID (SMPTE 330M): 32 bytes for a basic UMID, 64 for extended, null when unset. */
function umidHex(bytes: Uint8Array): string | null {
  let used = 0;
  for (let i = 0; i < bytes.length; i++) if (bytes[i] !== 0) used = i + 1;
  if (used === 0) return null;
  const length = used <= 32 ? 32 : 64;
  let out = "";
  for (let i = 0; i < length; i++) out += bytes[i].toString(16).padStart(2, "0");
  return out;
}

/** Through the loudness fields of version 2 (EBU Tech 3285 v2, 2.3: five 16-bit values at 412). */
const BEXT_LOUDNESS_END = 422;
/** EBU Tech 3285 v2: a loudness value that was not computed is written as 0x7FFF (from memory). */
const LOUDNESS_NOT_SET = 0x7fff;

/** The five loudness fields (signed, ×100), or undefined when the bytes are absent or all zero before version 2. */
function bextLoudness(body: Uint8Array, version: number): BextMetadata["loudness"] {
  if (body.length < BEXT_LOUDNESS_END) return undefined;
  const raw: number[] = [];
  let anySet = false;
  for (let at = 412; at < BEXT_LOUDNESS_END; at += 2) {
    const u = readUint16(body, at);
    if (u !== 0) anySet = true;
    raw.push(u);
  }
  if (!anySet && version < 2) return undefined;
  const value = (u: number): number | null => (u === LOUDNESS_NOT_SET ? null : (u >= 0x8000 ? u - 0x10000 : u) / 100);
  return {
    loudnessValue: value(raw[0]),
    loudnessRange: value(raw[1]),
    maxTruePeakLevel: value(raw[2]),
    maxMomentaryLoudness: value(raw[3]),
    maxShortTermLoudness: value(raw[4]),
  };
}

/** Parses a bext body (possibly cut at the reader's bound); null when too short to hold the fixed fields. */
export function parseBextChunk(body: Uint8Array): BextMetadata | null {
  if (body.length < BEXT_MIN_BYTES) return null;
  const version = readUint16(body, 346);
  // TimeReference: sample count since midnight, low then high 32 bits (EBU Tech 3285, 2.3).
  const timeReference = readUint32(body, 338) + readUint32(body, 342) * 0x100000000;
  const loudness = bextLoudness(body, version);
  return {
    description: decodeTextField(body.subarray(0, 256)),
    originator: decodeTextField(body.subarray(256, 288)),
    originatorReference: decodeTextField(body.subarray(288, 320)),
    originationDate: decodeTextField(body.subarray(320, 330)),
    originationTime: decodeTextField(body.subarray(330, 338)),
    timeReference,
    version,
    // The UMID field exists from version 1 on; read for any version so a version-0 chunk that uses it
    // can be reported as inconsistent (metadata rules) rather than hidden.
    umid: body.length >= 412 ? umidHex(body.subarray(348, 412)) : null,
    codingHistory: body.length > BEXT_FIXED_BYTES ? decodeTextField(body.subarray(BEXT_FIXED_BYTES)) : "",
    ...(loudness ? { loudness } : {}),
  };
}
