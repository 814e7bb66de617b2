import { describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { byteSourceFromBytes, readWavLayout, WavFormatError, type WavErrorCode, type WavLayout } from "../../shared/src/wav/index.ts";
import { sine, whiteNoise } from "../fixtures/synth.ts";
import { encodeWav, type WavEncodeOptions } from "../fixtures/wavWriter.ts";

// Layout facts are cross-checked against wavefile (an independent reader from npm) where it reads the layout,
// and against the byte positions the RIFF specification (Microsoft, 1991) and EBU Tech 3285/3306 define.

const ascii = (s: string): Uint8Array => Uint8Array.from(s, (ch) => ch.charCodeAt(0));

function riffChunk(id: string, body: Uint8Array): Uint8Array {
  const out = new Uint8Array(8 + body.length + (body.length & 1));
  out.set(ascii(id), 0);
  new DataView(out.buffer).setUint32(4, body.length, true);
  out.set(body, 8);
  return out;
}

function listInfo(entries: Record<string, string>): Uint8Array {
  const parts = [ascii("INFO"), ...Object.entries(entries).map(([id, text]) => riffChunk(id, ascii(`${text}\0`)))];
  const body = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let at = 0;
  for (const p of parts) {
    body.set(p, at);
    at += p.length;
  }
  return riffChunk("LIST", body);
}

/** Appends chunks after the data chunk and fixes the RIFF size (RIFF spec: size = file length − 8). */
function appendChunks(wav: Uint8Array, chunks: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(wav.length + chunks.reduce((s, c) => s + c.length, 0));
  out.set(wav, 0);
  let at = wav.length;
  for (const c of chunks) {
    out.set(c, at);
    at += c.length;
  }
  new DataView(out.buffer).setUint32(4, out.length - 8, true);
  return out;
}

/** Offset of a chunk header (its id) in a RIFF byte array, by walking the chunk list. */
function chunkOffset(bytes: Uint8Array, id: string): number {
  const v = new DataView(bytes.buffer, bytes.byteOffset, bytes.length);
  let at = 12;
  while (at + 8 <= bytes.length) {
    const found = String.fromCharCode(...bytes.subarray(at, at + 4));
    if (found === id) return at;
    const size = v.getUint32(at + 4, true);
    at += 8 + size + (size & 1);
  }
  throw new Error(`fixture has no ${id} chunk`);
}

function stereoFixture(o: Partial<WavEncodeOptions> & { seconds?: number } = {}): Uint8Array {
  const rate = o.sampleRateHz ?? 48000;
  const seconds = o.seconds ?? 0.05;
  const left = sine({ frequencyHz: 997, sampleRateHz: rate, seconds, peakDbfs: -6 });
  const right = whiteNoise({ sampleRateHz: rate, seconds, rmsDbfs: -20, seed: 3 });
  return encodeWav([left, right], { sampleRateHz: rate, bitDepth: 24, ...o });
}

const layoutOf = (bytes: Uint8Array) => readWavLayout(byteSourceFromBytes(bytes));

async function expectWavError(bytes: Uint8Array, code: WavErrorCode, message: RegExp): Promise<void> {
  const error = await layoutOf(bytes).then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(WavFormatError);
  expect(error).toMatchObject({ code, message: expect.stringMatching(message) });
}

interface WavefileFmt {
  audioFormat: number;
  numChannels: number;
  sampleRate: number;
  blockAlign: number;
  bitsPerSample: number;
  validBitsPerSample?: number;
  dwChannelMask?: number;
}

describe("readWavLayout: layouts", () => {
  it.each([
    { bitDepth: 8, encoding: "pcm" },
    { bitDepth: 16, encoding: "pcm" },
    { bitDepth: 24, encoding: "pcm" },
    { bitDepth: 32, encoding: "pcm" },
    { bitDepth: 32, encoding: "float" },
    { bitDepth: 64, encoding: "float" },
  ] as const)("$bitDepth-bit $encoding: fmt fields and data size agree with wavefile", async ({ bitDepth, encoding }) => {
    const bytes = stereoFixture({ bitDepth, encoding, sampleRateHz: 44100 });
    const layout = await layoutOf(bytes);
    const wav = new WaveFile(bytes);
    const fmt = wav.fmt as WavefileFmt;
    expect(layout.container).toBe("wav");
    expect(layout.encoding).toBe(encoding);
    expect(layout.formatTag).toBe(fmt.audioFormat);
    expect(layout.channels).toBe(fmt.numChannels);
    expect(layout.sampleRateHz).toBe(fmt.sampleRate);
    expect(layout.bitDepth).toBe(fmt.bitsPerSample);
    expect(layout.validBits).toBe(fmt.bitsPerSample);
    expect(layout.blockAlign).toBe(fmt.blockAlign);
    expect(layout.claimedDataBytes).toBe((wav.data as { chunkSize: number }).chunkSize);
    expect(layout.dataBytes).toBe(layout.claimedDataBytes);
    // 0.05 s at 44.1 kHz = 2205 frames (definition of the sample rate).
    expect(layout.totalFrames).toBe(2205);
    expect(layout.isTruncated).toBe(false);
    expect(layout.channelMask).toBeNull();
    // The data body starts right after its 8-byte header (RIFF specification).
    expect(layout.dataOffset).toBe(chunkOffset(bytes, "data") + 8);
  });

  it("WAVE_FORMAT_EXTENSIBLE: SubFormat, valid bits and channel mask as wavefile reads them", async () => {
    const bytes = stereoFixture({ extensible: true, bitDepth: 24 });
    const layout = await layoutOf(bytes);
    const fmt = new WaveFile(bytes).fmt as WavefileFmt;
    expect(layout.formatTag).toBe(0xfffe);
    expect(fmt.audioFormat).toBe(0xfffe);
    expect(layout.encoding).toBe("pcm");
    expect(layout.validBits).toBe(fmt.validBitsPerSample);
    expect(layout.channelMask).toBe(fmt.dwChannelMask);
    // SPEAKER_FRONT_LEFT | SPEAKER_FRONT_RIGHT (Microsoft ksmedia.h).
    expect(layout.channelMask).toBe(0x3);
  });

  it("extensible float is read as float", async () => {
    const layout = await layoutOf(stereoFixture({ extensible: true, bitDepth: 32, encoding: "float" }));
    expect(layout).toMatchObject({ encoding: "float", bitDepth: 32, formatTag: 0xfffe });
  });

  it("BWF: bext fields (EBU Tech 3285) match wavefile, the UMID comes out as hex", async () => {
    const umid = new Uint8Array(64);
    for (let i = 0; i < 32; i++) umid[i] = (i * 37 + 11) & 0xff;
    const bext = {
      description: "Ferry Terminal Interviews 1978, reel 4 side A",
      originator: "Harbourside Sound Archive",
      originatorReference: "HSA-FTI-1978-004A",
      originationDate: "2024-03-18",
      originationTime: "14:02:55",
      timeReference: 2 ** 33 + 12345,
      codingHistory: "A=ANALOGUE,M=stereo,T=Studer A807\r\nA=PCM,F=96000,W=24,M=stereo,T=ADC\r\n",
      umid,
    };
    const bytes = stereoFixture({ bext });
    const layout = await layoutOf(bytes);
    const theirs = new WaveFile(bytes).bext as Record<string, unknown> & { timeReference: number[] };
    const strip = (v: unknown) => String(v).replace(/\0+$/, "");
    expect(layout.container).toBe("bwf");
    const mine = layout.metadata.bext;
    expect(mine).toBeDefined();
    expect(mine?.description).toBe(strip(theirs.description));
    expect(mine?.originator).toBe(strip(theirs.originator));
    expect(mine?.originatorReference).toBe(strip(theirs.originatorReference));
    expect(mine?.originationDate).toBe(strip(theirs.originationDate));
    expect(mine?.originationTime).toBe(strip(theirs.originationTime));
    // TimeReference is low word then high word (EBU Tech 3285, 2.3).
    expect(mine?.timeReference).toBe(theirs.timeReference[0] + theirs.timeReference[1] * 2 ** 32);
    expect(mine?.timeReference).toBe(bext.timeReference);
    expect(mine?.version).toBe(1);
    expect(mine?.codingHistory).toBe(bext.codingHistory.trimEnd());
    // Basic UMID: 32 bytes (SMPTE 330M), as lowercase hex.
    expect(mine?.umid).toBe(Array.from(umid.subarray(0, 32), (b) => b.toString(16).padStart(2, "0")).join(""));
  });

  it("bext without a UMID gives umid null", async () => {
    const layout = await layoutOf(stereoFixture({ bext: { description: "no umid" } }));
    expect(layout.metadata.bext?.umid).toBeNull();
    expect(layout.metadata.bext?.version).toBe(0);
  });

  it("RF64: sizes come from ds64 (EBU Tech 3306), fmt agrees with wavefile", async () => {
    const bytes = stereoFixture({ rf64: true, bitDepth: 16 });
    const layout = await layoutOf(bytes);
    const fmt = new WaveFile(bytes).fmt as WavefileFmt;
    expect(layout.container).toBe("rf64");
    expect(layout.sampleRateHz).toBe(fmt.sampleRate);
    expect(layout.channels).toBe(fmt.numChannels);
    // The 32-bit data size field holds 0xFFFFFFFF; the real one is in ds64 (EBU Tech 3306, 3.2).
    const dataSizeField = new DataView(bytes.buffer).getUint32(chunkOffset(bytes, "data") + 4, true);
    expect(dataSizeField).toBe(0xffffffff);
    expect(layout.claimedDataBytes).toBe(2400 * 4);
    expect(layout.totalFrames).toBe(2400);
    expect(layout.chunks[0].id).toBe("ds64");
  });

  it("RF64 data size above 4 GB in ds64: clamped to the file, flagged truncated, no allocation from the claim", async () => {
    const bytes = stereoFixture({ rf64: true, bitDepth: 16 });
    // ds64 dataSize high word (EBU Tech 3306: riffSize, dataSize, sampleCount as low/high 32-bit pairs).
    new DataView(bytes.buffer).setUint32(20 + 8 + 4, 2, true);
    const layout = await layoutOf(bytes);
    expect(layout.claimedDataBytes).toBe(2 * 2 ** 32 + 2400 * 4);
    expect(layout.dataBytes).toBe(2400 * 4);
    expect(layout.isTruncated).toBe(true);
  });

  it("chunks before fmt, odd-sized chunks with their pad byte, LIST/INFO and iXML are walked", async () => {
    const ixml = '<?xml version="1.0"?><BWFXML><PROJECT>Lighthouse Choir Reels</PROJECT></BWFXML>';
    const bytes = stereoFixture({
      extraChunks: [
        { id: "JUNK", body: new Uint8Array(27), beforeFmt: true },
        { id: "iXML", body: ascii(ixml) },
        { id: "odd!", body: new Uint8Array(5) },
      ],
    });
    const withList = appendChunks(bytes, [listInfo({ INAM: "Evening hymn", ICMT: "Take 2; tape hiss" })]);
    const layout = await layoutOf(withList);
    expect(layout.chunks.map((c) => c.id)).toEqual(["JUNK", "fmt ", "iXML", "odd!", "data", "LIST"]);
    expect(layout.chunks[0].sizeBytes).toBe(27);
    // The odd JUNK body is followed by one pad byte, so fmt starts at 12 + 8 + 27 + 1 (RIFF specification).
    expect(layout.chunks[1].offset).toBe(48);
    expect(layout.metadata.ixml).toBe(ixml);
    // wavefile only parses a LIST that is the last chunk; it is here.
    expect(layout.metadata.info).toEqual(new WaveFile(withList).listTags());
    expect(layout.metadata.info).toEqual({ INAM: "Evening hymn", ICMT: "Take 2; tape hiss" });
    expect(layout.totalFrames).toBe(2400);
  });

  it("an odd chunk written without its pad byte is still walked (common writer bug)", async () => {
    const fmtAndData = stereoFixture().subarray(12);
    const junk = new Uint8Array(8 + 3);
    junk.set(ascii("JUNK"), 0);
    new DataView(junk.buffer).setUint32(4, 3, true);
    const bytes = new Uint8Array(12 + junk.length + fmtAndData.length);
    bytes.set(ascii("RIFF"), 0);
    bytes.set(ascii("WAVE"), 8);
    bytes.set(junk, 12);
    bytes.set(fmtAndData, 12 + junk.length);
    new DataView(bytes.buffer).setUint32(4, bytes.length - 8, true);
    const layout = await layoutOf(bytes);
    expect(layout.chunks.map((c) => c.id)).toEqual(["JUNK", "fmt ", "data"]);
    expect(layout.totalFrames).toBe(2400);
  });

  it("RF64 past 4 GB: a virtual 5 GB file, with a LIST chunk after 4.5 GB of data, is walked at 64-bit offsets", async () => {
    const dataBytes = 4.5 * 2 ** 30;
    const head = stereoFixture({ rf64: true, bitDepth: 24, seconds: 0.001 });
    const dataAt = chunkOffset(head, "data") + 8;
    const list = listInfo({ INAM: "Lighthouse Choir Reels, reel 12" });
    const listAt = dataAt + dataBytes;
    const size = listAt + list.length;
    const v = new DataView(head.buffer);
    // ds64 sizes (EBU Tech 3306, 3.2): riffSize, dataSize, sampleCount as low/high 32-bit words.
    const put64 = (at: number, value: number) => {
      v.setUint32(at, value % 2 ** 32, true);
      v.setUint32(at + 4, Math.floor(value / 2 ** 32), true);
    };
    put64(20, size - 8);
    put64(28, dataBytes);
    put64(36, dataBytes / 6);
    // Only the header and the trailing LIST exist; everything else reads as zeros, never allocated whole.
    const source = {
      sizeBytes: size,
      readAt: async (offset: number, length: number) => {
        const out = new Uint8Array(Math.max(0, Math.min(length, size - offset, 1 << 20)));
        for (let i = 0; i < out.length; i++) {
          const at = offset + i;
          out[i] = at < dataAt ? head[at] : at >= listAt ? list[at - listAt] : 0;
        }
        return out;
      },
    };
    const layout = await readWavLayout(source);
    expect(layout.container).toBe("rf64");
    expect(layout.dataBytes).toBe(dataBytes);
    expect(layout.totalFrames).toBe(dataBytes / 6);
    expect(layout.isTruncated).toBe(false);
    expect(layout.chunks.at(-1)).toEqual({ id: "LIST", offset: listAt, sizeBytes: list.length - 8 });
    expect(layout.metadata.info).toEqual({ INAM: "Lighthouse Choir Reels, reel 12" });
  });

  it("a data chunk before fmt is accepted (RIFF allows any chunk order)", async () => {
    const normal = stereoFixture({ bitDepth: 16 });
    const fmtAt = chunkOffset(normal, "fmt ");
    const dataAt = chunkOffset(normal, "data");
    const fmt = normal.slice(fmtAt, dataAt);
    const data = normal.slice(dataAt);
    const bytes = new Uint8Array(normal.length);
    bytes.set(normal.subarray(0, 12), 0);
    bytes.set(data, 12);
    bytes.set(fmt, 12 + data.length);
    const layout = await layoutOf(bytes);
    expect(layout.chunks.map((c) => c.id)).toEqual(["data", "fmt "]);
    expect(layout.dataOffset).toBe(20);
    expect(layout.totalFrames).toBe(2400);
  });

  it("truncated data: measured on the bytes present", async () => {
    const whole = stereoFixture();
    const cut = whole.subarray(0, whole.length - 1000);
    const layout = await layoutOf(cut);
    expect(layout.isTruncated).toBe(true);
    expect(layout.claimedDataBytes).toBe(2400 * 6);
    expect(layout.dataBytes).toBe(2400 * 6 - 1000);
    // 13400 bytes / 6 bytes per frame = 2233 whole frames.
    expect(layout.totalFrames).toBe(2233);
  });

  it("a data size field larger than the file is clamped", async () => {
    const bytes = stereoFixture();
    new DataView(bytes.buffer).setUint32(chunkOffset(bytes, "data") + 4, 0x7fffffff, true);
    const layout = await layoutOf(bytes);
    expect(layout.claimedDataBytes).toBe(0x7fffffff);
    expect(layout.dataBytes).toBe(2400 * 6);
    expect(layout.isTruncated).toBe(true);
  });

  it("a one-frame file is valid", async () => {
    const layout = await layoutOf(encodeWav([new Float32Array([0.5])], { sampleRateHz: 8000, bitDepth: 16 }));
    expect(layout.totalFrames).toBe(1);
  });

  it("header reads are few: one up-front read serves a typical header", async () => {
    const bytes = stereoFixture({ seconds: 2, bext: { description: "x" } });
    let reads = 0;
    const source = byteSourceFromBytes(bytes);
    await readWavLayout({ sizeBytes: source.sizeBytes, readAt: (o, n) => (reads++, source.readAt(o, n)) });
    expect(reads).toBeLessThanOrEqual(2);
  });
});

describe("readWavLayout: malformed input gives a stable code and a one-line message", () => {
  const valid = () => stereoFixture({ bitDepth: 16 });
  const fmtAt = (bytes: Uint8Array) => chunkOffset(bytes, "fmt ") + 8;
  const setU16 = (bytes: Uint8Array, at: number, value: number) => new DataView(bytes.buffer).setUint16(at, value, true);
  const setU32 = (bytes: Uint8Array, at: number, value: number) => new DataView(bytes.buffer).setUint32(at, value, true);

  it("empty-file", () => expectWavError(new Uint8Array(0), "empty-file", /empty/));
  it("not-riff (random bytes)", () => expectWavError(Uint8Array.from([0x13, 0x99, 0, 7, 1, 2, 3, 4, 5, 6, 7, 8]), "not-riff", /RIFF/));
  it("not-riff (text named .wav)", () => expectWavError(ascii("hello, this is not audio\n"), "not-riff", /"hell"/));
  it("truncated (3 bytes of a RIFF header)", () => expectWavError(ascii("RIF"), "truncated", /RIFF header/));
  it("truncated (header cut inside the RIFF header)", () => expectWavError(valid().subarray(0, 10), "truncated", /RIFF header/));
  it("unsupported-container (big-endian RIFX)", () => {
    const bytes = valid();
    bytes.set(ascii("RIFX"), 0);
    return expectWavError(bytes, "unsupported-container", /RIFX/);
  });
  it("not-wave (RIFF of another form)", () => {
    const bytes = valid();
    bytes.set(ascii("AVI "), 8);
    return expectWavError(bytes, "not-wave", /"AVI "/);
  });
  it("truncated (file ends inside a chunk before the audio)", () => {
    const bytes = stereoFixture({ extraChunks: [{ id: "JUNK", body: new Uint8Array(200), beforeFmt: true }] });
    return expectWavError(bytes.subarray(0, 100), "truncated", /inside the "JUNK" chunk/);
  });
  it("no-fmt-chunk", () => {
    const bytes = valid();
    bytes.set(ascii("fmtX"), chunkOffset(bytes, "fmt "));
    return expectWavError(bytes, "no-fmt-chunk", /no "fmt " chunk/);
  });
  it("no-data-chunk", () => {
    const bytes = valid();
    bytes.set(ascii("dat_"), chunkOffset(bytes, "data"));
    return expectWavError(bytes, "no-data-chunk", /no "data" chunk/);
  });
  it("bad-fmt-chunk (fmt smaller than 16 bytes)", () => {
    const bytes = valid();
    const at = chunkOffset(bytes, "fmt ");
    // Shrink fmt to 12 bytes and turn the rest into a JUNK chunk so the walk stays aligned.
    setU32(bytes, at + 4, 12);
    bytes.set(ascii("JUNK"), at + 8 + 12);
    setU32(bytes, at + 8 + 16, 0);
    return expectWavError(bytes, "bad-fmt-chunk", /12 bytes; at least 16/);
  });
  it("bad-fmt-chunk (fmt size lies past the end of the file)", () => {
    const bytes = valid();
    setU32(bytes, chunkOffset(bytes, "fmt ") + 4, 0xfffffff0);
    return expectWavError(bytes, "bad-fmt-chunk", /claims 4294967280 bytes/);
  });
  it("bad-fmt-chunk (extensible fmt too short)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes), 0xfffe);
    return expectWavError(bytes, "bad-fmt-chunk", /EXTENSIBLE.*40 expected/);
  });
  it("unsupported-encoding (compressed codec tag)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes), 0x0055);
    return expectWavError(bytes, "unsupported-encoding", /0x0055 \(MPEG Layer 3\)/);
  });
  it("unsupported-encoding (extensible with a non-WAVE SubFormat)", () => {
    const bytes = stereoFixture({ extensible: true });
    bytes[fmtAt(bytes) + 24 + 15] ^= 0xff;
    return expectWavError(bytes, "unsupported-encoding", /SubFormat GUID/);
  });
  it("bad-channel-count (zero channels)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes) + 2, 0);
    return expectWavError(bytes, "bad-channel-count", /^0 channels; 1 to 8/);
  });
  it("bad-channel-count (nine channels)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes) + 2, 9);
    return expectWavError(bytes, "bad-channel-count", /^9 channels/);
  });
  it("bad-sample-rate (zero)", () => {
    const bytes = valid();
    setU32(bytes, fmtAt(bytes) + 4, 0);
    return expectWavError(bytes, "bad-sample-rate", /^sample rate 0 Hz; 8000 to 384000/);
  });
  it("bad-bit-depth (7-bit samples)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes) + 14, 7);
    return expectWavError(bytes, "bad-bit-depth", /^7 bits per sample in PCM data; 8, 16, 24, 32 expected/);
  });
  it("bad-bit-depth (16-bit float)", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes), 3);
    return expectWavError(bytes, "bad-bit-depth", /16 bits per sample in float data; 32, 64/);
  });
  it("bad-block-align", () => {
    const bytes = valid();
    setU16(bytes, fmtAt(bytes) + 12, 3);
    return expectWavError(bytes, "bad-block-align", /block align 3 bytes; 4 expected/);
  });
  it("bad-ds64 (RF64 without ds64 first)", () => {
    const bytes = valid();
    bytes.set(ascii("RF64"), 0);
    return expectWavError(bytes, "bad-ds64", /first chunk is "fmt "; "ds64" expected/);
  });
  it("bad-ds64 (ds64 too short)", () => {
    const bytes = stereoFixture({ rf64: true });
    // Shrink ds64 to 8 bytes: the three 64-bit sizes no longer fit.
    setU32(bytes, 16, 8);
    return expectWavError(bytes, "bad-ds64", /ds64 chunk is 8 bytes; at least 24/);
  });
  it("bad-ds64 (size above 2^53)", () => {
    const bytes = stereoFixture({ rf64: true });
    setU32(bytes, 20 + 12, 0xffffffff);
    return expectWavError(bytes, "bad-ds64", /above 2\^53/);
  });
  it("bad-chunk (unreadable chunk id before the audio)", () => {
    const bytes = valid();
    bytes.set([0x00, 0xff, 0x13, 0x37], chunkOffset(bytes, "fmt "));
    return expectWavError(bytes, "bad-chunk", /unreadable chunk id 00 ff 13 37 at byte 12/);
  });

  it("never throws anything but WavFormatError on random mutations of a valid header (bounded fuzz)", async () => {
    const base = stereoFixture({ bitDepth: 16, bext: { description: "fuzz" } }).subarray(0, 900);
    let state = 12345;
    const next = () => (state = (Math.imul(state, 1103515245) + 12345) >>> 0);
    for (let round = 0; round < 400; round++) {
      const bytes = base.slice();
      const flips = 1 + (next() % 4);
      for (let k = 0; k < flips; k++) bytes[next() % 700] = next() & 0xff;
      const cut = bytes.subarray(0, 1 + (next() % bytes.length));
      const outcome: WavLayout | unknown = await layoutOf(cut).then(
        (layout) => layout,
        (e: unknown) => e,
      );
      if (outcome instanceof Error) expect(outcome).toBeInstanceOf(WavFormatError);
      else expect((outcome as WavLayout).dataBytes).toBeLessThanOrEqual(cut.length);
    }
  });
});
