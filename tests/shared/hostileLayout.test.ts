/**
 * The layout parser on the hostile-file corpus (tests/helpers/hostileCorpus.ts) and on bounded random
 * mutations of valid WAV, BWF, RF64 and WAVE_FORMAT_EXTENSIBLE headers: the only outcomes are a layout or a
 * WavFormatError, and no read ever reaches past the end of the file, whatever size a header claims.
 */
import { describe, expect, it } from "vitest";
import { createDataChunkDecoder } from "../../shared/src/wav/dataChunkDecoder.ts";
import { byteSourceFromBytes, type ByteSource } from "../../shared/src/wav/byteSource.ts";
import { WAV_ERROR_CODES, WavFormatError } from "../../shared/src/wav/errors.ts";
import { readerFindings } from "../../shared/src/wav/readerFindings.ts";
import { readWavLayout, type WavLayout } from "../../shared/src/wav/wavLayout.ts";
import { seededRandom, sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav, type WavEncodeOptions } from "../fixtures/wavWriter.ts";
import { chunkOffset, hostileByteCases } from "../helpers/hostileCorpus.ts";

/** The largest single read the walker may make: the 64 KiB head, or a bext body bounded by its coding history cap. */
const MAX_READ_BYTES = 602 + 64 * 1024;

interface CheckedSource extends ByteSource {
  violations: string[];
  reads: number;
}

/**
 * A source that records every read outside the file or above MAX_READ_BYTES. `virtualTail` appends that
 * many zero bytes that are never stored, so a lying size can point far past the real bytes without the
 * test allocating it, and reads past the 64 KiB head reach the checked source.
 */
function checkedSource(bytes: Uint8Array, virtualTail = 0): CheckedSource {
  const sizeBytes = bytes.length + virtualTail;
  const source: CheckedSource = {
    sizeBytes,
    violations: [],
    reads: 0,
    readAt: async (offset, length) => {
      source.reads++;
      if (!Number.isSafeInteger(offset) || !Number.isSafeInteger(length) || offset < 0 || length < 0 || offset + length > sizeBytes) {
        source.violations.push(`readAt(${offset}, ${length}) on a ${sizeBytes}-byte file`);
      }
      if (length > MAX_READ_BYTES) source.violations.push(`readAt(${offset}, ${length}) asks for more than ${MAX_READ_BYTES} bytes`);
      const out = new Uint8Array(Math.max(0, Math.min(length, sizeBytes - offset, MAX_READ_BYTES)));
      if (offset < bytes.length) out.set(bytes.subarray(offset, Math.min(bytes.length, offset + out.length)));
      return out;
    },
  };
  return source;
}

const outcomeOf = (source: ByteSource): Promise<WavLayout | unknown> =>
  readWavLayout(source).then(
    (layout) => layout,
    (e: unknown) => e,
  );

/** Decodes the data chunk from the file's bytes as readAudioFile does, in uneven pushes; returns frames and non-finite count. */
function decodeAll(layout: WavLayout, bytes: Uint8Array): { frames: number; nonFinite: number } {
  let frames = 0;
  const decoder = createDataChunkDecoder(layout, 997, (block) => {
    frames += block.frames;
    for (const channel of block.channels) expect(channel.length).toBeGreaterThanOrEqual(block.frames);
  });
  for (let at = 0; at < bytes.length; at += 1237) decoder.push(bytes.subarray(at, at + 1237), at);
  decoder.finish();
  return { frames, nonFinite: decoder.samples.nonFiniteSamples };
}

/** What every accepted layout must satisfy, whatever the header said. */
function expectSaneLayout(layout: WavLayout, fileSize: number): void {
  expect(layout.dataOffset).toBeGreaterThanOrEqual(12);
  expect(layout.dataOffset + layout.dataBytes).toBeLessThanOrEqual(fileSize);
  expect(layout.totalFrames * layout.blockAlign).toBeLessThanOrEqual(layout.dataBytes);
  expect(layout.channels).toBeGreaterThanOrEqual(1);
  expect(layout.channels).toBeLessThanOrEqual(8);
  expect(layout.blockAlign).toBe(layout.channels * (layout.bitDepth / 8));
  expect(layout.sampleRateHz).toBeGreaterThanOrEqual(8000);
  expect(layout.sampleRateHz).toBeLessThanOrEqual(384000);
  expect(layout.chunks.length).toBeLessThanOrEqual(4096);
}

describe("readWavLayout on the hostile corpus", () => {
  it.each(hostileByteCases())("$name ($what)", async (c) => {
    const source = checkedSource(c.bytes);
    const outcome = await outcomeOf(source);
    expect(source.violations).toEqual([]);
    if ("error" in c.layout) {
      expect(outcome).toBeInstanceOf(WavFormatError);
      const error = outcome as WavFormatError;
      expect(error.code).toBe(c.layout.error);
      expect(error.message).toMatch(c.layout.message);
      expect(error.message).not.toMatch(/[\r\n]/);
      return;
    }
    expect(outcome).not.toBeInstanceOf(Error);
    const layout = outcome as WavLayout;
    expectSaneLayout(layout, c.bytes.length);
    expect({ totalFrames: layout.totalFrames, isTruncated: layout.isTruncated, isDataSizeUnwritten: layout.isDataSizeUnwritten }).toEqual(c.layout);
    const decoded = decodeAll(layout, c.bytes);
    expect(decoded.frames).toBe(layout.totalFrames);
    const findings = readerFindings(layout, { nonFiniteSamples: decoded.nonFinite, firstNonFiniteFrame: null, lastNonFiniteFrame: null });
    if ("finding" in c.scan) {
      expect(findings.map((f) => f.code)).toEqual([c.scan.finding]);
      expect(findings[0].message).toMatch(c.scan.message);
    } else {
      expect(findings).toEqual([]);
    }
  });

  it("an empty data chunk followed by a real chunk is a valid silent file, not an unfinished recording", async () => {
    const list = Uint8Array.from("LIST\x0c\0\0\0INFOINAM\0\0\0\0", (ch) => ch.charCodeAt(0));
    const header = encodeWav([new Float32Array(0)], { sampleRateHz: 8000, bitDepth: 16 });
    const bytes = new Uint8Array(header.length + list.length);
    bytes.set(header, 0);
    bytes.set(list, header.length);
    const layout = await readWavLayout(byteSourceFromBytes(bytes));
    expect(layout).toMatchObject({ totalFrames: 0, dataBytes: 0, isTruncated: false, isDataSizeUnwritten: false });
    expect(layout.chunks.map((x) => x.id)).toEqual(["fmt ", "data", "LIST"]);
  });

  it("a RIFF file past 4 GB with the 0xFFFFFFFF placeholder is read to its end (virtual 5 GB file)", async () => {
    const head = encodeWav([new Float32Array(4)], { sampleRateHz: 48000, bitDepth: 16 });
    new DataView(head.buffer).setUint32(chunkOffset(head, "data") + 4, 0xffffffff, true);
    const tail = 5 * 2 ** 30;
    const source = checkedSource(head, tail);
    const layout = await readWavLayout(source);
    expect(source.violations).toEqual([]);
    expect(layout.isDataSizeUnwritten).toBe(true);
    expect(layout.dataBytes).toBe(head.length + tail - layout.dataOffset);
  });
});

// ---- bounded fuzz over every container ----

type Mutation = (bytes: Uint8Array, rnd: () => number, fields: number[]) => Uint8Array;

const int = (rnd: () => number, n: number): number => Math.floor(rnd() * n);

/** Offsets of every 32-bit size field in a file: the RIFF size and each chunk's, plus ds64's 64-bit words. */
function sizeFields(bytes: Uint8Array): number[] {
  const v = new DataView(bytes.buffer, bytes.byteOffset, bytes.length);
  const fields = [4];
  let at = 12;
  while (at + 8 <= bytes.length) {
    fields.push(at + 4);
    const id = String.fromCharCode(...bytes.subarray(at, at + 4));
    // RF64 ds64 (EBU Tech 3306, 3.2): riffSize, dataSize, sampleCount as low/high words, then tableLength.
    if (id === "ds64") fields.push(at + 8, at + 12, at + 16, at + 20, at + 24, at + 28, at + 32);
    const size = v.getUint32(at + 4, true);
    if (id === "data" && size === 0xffffffff) break;
    at += 8 + size + (size & 1);
  }
  return fields;
}

const SIZE_VALUES = (length: number, rnd: () => number): number[] => [
  0,
  1,
  7,
  15,
  16,
  17,
  39,
  40,
  0x7fffffff,
  0x80000000,
  0xfffffff0,
  0xffffffff,
  length,
  length - 8,
  length + 1,
  Math.max(0, length - 8 - int(rnd, 64)),
  int(rnd, 2 ** 32),
];

const mutations: Record<string, Mutation> = {
  flipBytes: (bytes, rnd) => {
    const out = bytes.slice();
    const headerEnd = Math.min(out.length, 900);
    for (let k = 1 + int(rnd, 6); k > 0; k--) out[int(rnd, headerEnd)] = int(rnd, 256);
    return out;
  },
  flipBits: (bytes, rnd) => {
    const out = bytes.slice();
    for (let k = 1 + int(rnd, 4); k > 0; k--) out[int(rnd, Math.min(out.length, 200))] ^= 1 << int(rnd, 8);
    return out;
  },
  truncate: (bytes, rnd) => bytes.slice(0, int(rnd, bytes.length + 1)),
  rewriteSize: (bytes, rnd, fields) => {
    const out = bytes.slice();
    const values = SIZE_VALUES(bytes.length, rnd);
    for (let k = 1 + int(rnd, 2); k > 0; k--) {
      const at = fields[int(rnd, fields.length)];
      // An earlier truncation may have cut the field off.
      if (at + 4 <= out.length) new DataView(out.buffer).setUint32(at, values[int(rnd, values.length)], true);
    }
    return out;
  },
  rewriteFmtField: (bytes, rnd) => {
    const out = bytes.slice();
    const fmt = chunkOffset(out, "fmt ");
    if (fmt < 0) return out;
    // wFormatTag, nChannels, nSamplesPerSec, nBlockAlign, wBitsPerSample, cbSize, wValidBits, SubFormat tag.
    const at = fmt + 8 + [0, 2, 4, 12, 14, 16, 18, 24][int(rnd, 8)];
    const values = [0, 1, 2, 3, 7, 9, 0x55, 0xfffe, 0xffff, int(rnd, 65536)];
    if (at + 2 <= out.length) new DataView(out.buffer).setUint16(at, values[int(rnd, values.length)], true);
    return out;
  },
};

const seconds = 0.02;
const stereo = (rate: number): Float32Array[] => [
  sine({ frequencyHz: 997, sampleRateHz: rate, seconds, peakDbfs: -6 }),
  whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -20, seed: 4 }),
];
const ixml = Uint8Array.from('<?xml version="1.0"?><BWFXML><NOTE>fuzz</NOTE></BWFXML>', (ch) => ch.charCodeAt(0));

const CONTAINERS: { name: string; options: WavEncodeOptions }[] = [
  { name: "WAV 16-bit", options: { sampleRateHz: 44100, bitDepth: 16 } },
  {
    name: "BWF with bext and iXML",
    options: { sampleRateHz: 48000, bitDepth: 24, bext: { description: "Ferry Terminal Interviews 1978", codingHistory: "A=PCM,F=48000,W=24,M=stereo\r\n" }, extraChunks: [{ id: "iXML", body: ixml }] },
  },
  { name: "RF64", options: { sampleRateHz: 96000, bitDepth: 24, rf64: true } },
  { name: "extensible float", options: { sampleRateHz: 48000, bitDepth: 32, encoding: "float", extensible: true } },
];

describe("readWavLayout: bounded fuzz of valid headers (fixed seeds, 600 rounds a container)", () => {
  it.each(CONTAINERS)("$name: only layouts or WavFormatErrors, no read past the file, decodable layouts", async ({ name, options }) => {
    const base = encodeWav(stereo(options.sampleRateHz), options);
    expect((await readWavLayout(byteSourceFromBytes(base))).totalFrames).toBe(Math.round(seconds * options.sampleRateHz));
    const fields = sizeFields(base);
    const rnd = seededRandom(0x9e3779b9 ^ name.length);
    const names = Object.keys(mutations);
    const codes = new Set<string>();
    let layouts = 0;
    for (let round = 0; round < 600; round++) {
      let bytes = base;
      for (let k = 1 + int(rnd, 3); k > 0; k--) bytes = mutations[names[int(rnd, names.length)]](bytes, rnd, fields);
      // Every other round the file goes on past the real bytes (zeros up to 5 GB), so claimed sizes have room to lie in.
      const virtualTail = round % 2 === 0 ? 0 : int(rnd, 2) === 0 ? 5 * 2 ** 30 : int(rnd, 1 << 20);
      const source = checkedSource(bytes, virtualTail);
      const outcome = await outcomeOf(source);
      const context = `${name}, round ${round}`;
      expect(source.violations, context).toEqual([]);
      if (outcome instanceof Error) {
        expect(outcome, `${context}: ${String(outcome)}`).toBeInstanceOf(WavFormatError);
        expect(WAV_ERROR_CODES, context).toContain((outcome as WavFormatError).code);
        expect(outcome.message, context).not.toMatch(/[\r\n]/);
        codes.add((outcome as WavFormatError).code);
        continue;
      }
      layouts++;
      const layout = outcome as WavLayout;
      expectSaneLayout(layout, source.sizeBytes);
      if (virtualTail === 0) expect(decodeAll(layout, bytes).frames, context).toBe(layout.totalFrames);
    }
    // The mutations reach both sides: some files still parse, and the errors are varied.
    expect(layouts).toBeGreaterThan(30);
    expect(codes.size).toBeGreaterThanOrEqual(6);
  });
});
