/**
 * The hostile-file corpus of issue #9, generated in code (no binaries in git): damaged, lying and
 * unsupported WAV/BWF/RF64 files, plus the file-system traps (a folder named x.wav, a symlink loop, an
 * unreadable file). Each case says what the layout parser and the scan are expected to make of it, so the
 * shared-level and CLI-level tests check the same table.
 */
import { chmodSync, mkdirSync, symlinkSync, writeFileSync } from "node:fs";
import path from "node:path";
import type { FindingCode } from "../../shared/src/types/report.ts";
import type { WavErrorCode } from "../../shared/src/wav/errors.ts";
import { seededRandom, sine } from "../fixtures/synth.ts";
import { encodeWav } from "../fixtures/wavWriter.ts";

/** What readWavLayout makes of the bytes: a WavFormatError with this code, or a layout with these facts. */
export type LayoutExpectation =
  | { error: WavErrorCode; message: RegExp }
  | { totalFrames: number; isTruncated: boolean; isDataSizeUnwritten: boolean };

/** What `tidemark scan` reports for the file. */
export type ScanExpectation =
  /** Verdict `error`, this stable code, a one-line message matching `message`. */
  | { error: string; message: RegExp }
  /** Measured on the audio that is there, with a finding naming the damage. */
  | { finding: FindingCode; message: RegExp; durationSeconds: number }
  /** Measured normally (an odd but valid file). */
  | { measured: true; durationSeconds: number };

export interface HostileCase {
  /** Path inside the corpus folder, as the scan reports it. */
  name: string;
  /** The damage, in a few words. */
  what: string;
  /** How it is written: the bytes as a file, a folder, a symbolic link to `linkTarget`, or a mode-000 file. */
  kind: "file" | "folder" | "symlink" | "unreadable";
  linkTarget?: string;
  /** The bytes written ("file" and "unreadable"); null for a folder or a link. */
  bytes: Uint8Array | null;
  /** Null where there are no bytes to parse (or the bytes are a valid file used for a file-system trap). */
  layout: LayoutExpectation | null;
  scan: ScanExpectation;
}

export interface HostileCorpus {
  cases: HostileCase[];
  /** Cases not written, and why (the unreadable file when running as root). */
  skipped: { name: string; why: string }[];
}

const RATE_HZ = 8000;
/** 0.25 s of a −6 dBFS 440 Hz tone, 16-bit mono: 2000 frames of 2 bytes. */
const FRAMES = 2000;

const ascii = (s: string): Uint8Array => Uint8Array.from(s, (ch) => ch.charCodeAt(0));
const view = (b: Uint8Array): DataView => new DataView(b.buffer, b.byteOffset, b.byteLength);
const setU16 = (b: Uint8Array, at: number, v: number): void => view(b).setUint16(at, v, true);
const setU32 = (b: Uint8Array, at: number, v: number): void => view(b).setUint32(at, v, true);

function tone(frames = FRAMES): Float32Array {
  return sine({ frequencyHz: 440, sampleRateHz: RATE_HZ, seconds: frames / RATE_HZ, peakDbfs: -6 });
}

/** A valid 16-bit mono WAV: RIFF header (12), fmt (8 + 16) at 12, data header at 36, samples from 44. */
export function validPcmWav(): Uint8Array {
  return encodeWav([tone()], { sampleRateHz: RATE_HZ, bitDepth: 16 });
}

/** A valid RF64 (EBU Tech 3306): ds64 at 12 (body 20..47: riffSize, dataSize, sampleCount, tableLength), fmt at 48. */
export function validRf64(): Uint8Array {
  return encodeWav([tone()], { sampleRateHz: RATE_HZ, bitDepth: 16, rf64: true });
}

/** Offset of a chunk header (its id), found by walking the chunk list; -1 when absent. */
export function chunkOffset(bytes: Uint8Array, id: string): number {
  let at = 12;
  while (at + 8 <= bytes.length) {
    if (String.fromCharCode(...bytes.subarray(at, at + 4)) === id) return at;
    const size = view(bytes).getUint32(at + 4, true);
    at += 8 + size + (size & 1);
  }
  return -1;
}

function edited(bytes: Uint8Array, edit: (b: Uint8Array) => void): Uint8Array {
  const copy = bytes.slice();
  edit(copy);
  return copy;
}

const FMT_BODY = 20;
const DATA_SIZE_FIELD = 40;
const DATA_BYTES = FRAMES * 2;

type ByteCase = Omit<HostileCase, "kind" | "bytes" | "layout"> & { bytes: Uint8Array; layout: LayoutExpectation };

function byteCases(): ByteCase[] {
  const valid = validPcmWav();
  const rf64 = validRf64();
  const rf64DataSize = 28;
  const rnd = seededRandom(9);
  const random = Uint8Array.from({ length: 4096 }, () => Math.floor(rnd() * 256));
  const float = encodeWav([Float32Array.from({ length: 800 }, (_, i) => (i === 100 ? NaN : i === 500 ? Infinity : i === 501 ? -Infinity : 0.1 * Math.sin(i / 10)))], {
    sampleRateHz: RATE_HZ,
    bitDepth: 32,
    encoding: "float",
  });
  // A chunk flood before fmt: more chunks than the walker's bound (MAX_CHUNKS = 4096).
  const flood = new Uint8Array(12 + 5000 * 8 + valid.length - 12);
  flood.set(valid.subarray(0, 12), 0);
  for (let i = 0; i < 5000; i++) flood.set(ascii("JUNK"), 12 + i * 8);
  flood.set(valid.subarray(12), 12 + 5000 * 8);
  setU32(flood, 4, flood.length - 8);

  return [
    { name: "empty.wav", what: "zero-length file", bytes: new Uint8Array(0), layout: { error: "empty-file", message: /^file is empty/ }, scan: { error: "empty-file", message: /empty/ } },
    { name: "random-bytes.wav", what: "4 KiB of seeded random bytes", bytes: random, layout: { error: "not-riff", message: /^not a RIFF file/ }, scan: { error: "not-riff", message: /not a RIFF file/ } },
    {
      name: "text.wav",
      what: "a text file named .wav",
      bytes: ascii("Lighthouse Choir Reels, reel 7: transfer notes.\nLeader tape missing.\n"),
      layout: { error: "not-riff", message: /starts with "Ligh"/ },
      scan: { error: "not-riff", message: /"Ligh"; "RIFF" or "RF64" expected/ },
    },
    {
      name: "riff-not-wave.wav",
      what: "a RIFF file of another form (AVI)",
      bytes: edited(valid, (b) => b.set(ascii("AVI "), 8)),
      layout: { error: "not-wave", message: /"AVI "; "WAVE" expected/ },
      scan: { error: "not-wave", message: /"AVI "/ },
    },
    {
      name: "truncated-header-in-fmt.wav",
      what: "file ends inside the fmt chunk",
      bytes: valid.slice(0, 30),
      layout: { error: "truncated", message: /ends inside the "fmt " chunk/ },
      scan: { error: "truncated", message: /ends inside the "fmt " chunk/ },
    },
    {
      name: "truncated-header-in-chunk-id.wav",
      what: "file ends inside the first chunk header",
      bytes: valid.slice(0, 16),
      layout: { error: "truncated", message: /ends inside a chunk header at byte 12/ },
      scan: { error: "truncated", message: /chunk header/ },
    },
    {
      name: "truncated-data.wav",
      what: "file cut in the middle of the audio",
      bytes: valid.slice(0, 44 + 1201),
      // 1201 bytes of 2-byte frames: 600 whole frames.
      layout: { totalFrames: 600, isTruncated: true, isDataSizeUnwritten: false },
      scan: { finding: "truncated", message: /claims 4000 bytes but the file holds 1201/, durationSeconds: 600 / RATE_HZ },
    },
    {
      name: "data-size-past-eof.wav",
      what: "data chunk size ten times the file",
      bytes: edited(valid, (b) => setU32(b, DATA_SIZE_FIELD, DATA_BYTES * 10)),
      layout: { totalFrames: FRAMES, isTruncated: true, isDataSizeUnwritten: false },
      scan: { finding: "truncated", message: /claims 40000 bytes but the file holds 4000/, durationSeconds: FRAMES / RATE_HZ },
    },
    {
      name: "fmt-size-past-eof.wav",
      what: "fmt chunk size larger than the file",
      bytes: edited(valid, (b) => setU32(b, 16, 0xfffffff0)),
      layout: { error: "bad-fmt-chunk", message: /fmt chunk claims 4294967280 bytes; only \d+ remain/ },
      scan: { error: "bad-fmt-chunk", message: /claims 4294967280 bytes/ },
    },
    {
      name: "fmt-size-too-small.wav",
      what: "fmt chunk size 12, below the 16 bytes of WAVEFORMAT",
      bytes: edited(valid, (b) => setU32(b, 16, 12)),
      layout: { error: "bad-fmt-chunk", message: /fmt chunk is 12 bytes; at least 16 expected/ },
      scan: { error: "bad-fmt-chunk", message: /12 bytes; at least 16/ },
    },
    {
      name: "fmt-size-overlaps-data.wav",
      what: "fmt chunk size 40 on a 16-byte body: the walk lands inside the samples",
      bytes: edited(valid, (b) => setU32(b, 16, 40)),
      // 12 + 8 + 40: the next "chunk header" is sample bytes.
      layout: { error: "bad-chunk", message: /unreadable chunk id .* at byte 60/ },
      scan: { error: "bad-chunk", message: /at byte 60/ },
    },
    {
      name: "zero-channels.wav",
      what: "fmt says 0 channels",
      bytes: edited(valid, (b) => setU16(b, FMT_BODY + 2, 0)),
      layout: { error: "bad-channel-count", message: /^0 channels; 1 to 8 supported$/ },
      scan: { error: "bad-channel-count", message: /0 channels/ },
    },
    {
      name: "zero-sample-rate.wav",
      what: "fmt says 0 Hz",
      bytes: edited(valid, (b) => setU32(b, FMT_BODY + 4, 0)),
      layout: { error: "bad-sample-rate", message: /^sample rate 0 Hz; 8000 to 384000 Hz supported$/ },
      scan: { error: "bad-sample-rate", message: /0 Hz/ },
    },
    {
      name: "7-bit.wav",
      what: "7 bits per sample",
      bytes: edited(valid, (b) => setU16(b, FMT_BODY + 14, 7)),
      layout: { error: "bad-bit-depth", message: /^7 bits per sample in PCM data; 8, 16, 24, 32 expected$/ },
      scan: { error: "bad-bit-depth", message: /7 bits/ },
    },
    {
      name: "mp3-in-wav.wav",
      what: "format tag 0x0055 (MPEG Layer 3) in a WAV",
      bytes: edited(valid, (b) => setU16(b, FMT_BODY, 0x0055)),
      layout: { error: "unsupported-encoding", message: /0x0055 \(MPEG Layer 3\) is not supported/ },
      scan: { error: "unsupported-encoding", message: /MPEG Layer 3/ },
    },
    {
      name: "adpcm-in-wav.wav",
      what: "format tag 0x0002 (Microsoft ADPCM), 4 bits per sample",
      bytes: edited(valid, (b) => {
        setU16(b, FMT_BODY, 0x0002);
        setU16(b, FMT_BODY + 14, 4);
      }),
      layout: { error: "unsupported-encoding", message: /0x0002 \(Microsoft ADPCM\)/ },
      scan: { error: "unsupported-encoding", message: /ADPCM/ },
    },
    {
      name: "extensible-mp3.wav",
      what: "WAVE_FORMAT_EXTENSIBLE whose SubFormat is MPEG Layer 3",
      bytes: edited(encodeWav([tone()], { sampleRateHz: RATE_HZ, bitDepth: 16, extensible: true }), (b) => setU16(b, FMT_BODY + 24, 0x0055)),
      layout: { error: "unsupported-encoding", message: /0x0055 \(MPEG Layer 3\)/ },
      scan: { error: "unsupported-encoding", message: /MPEG Layer 3/ },
    },
    {
      name: "rf64-without-ds64.rf64",
      what: "RF64 whose first chunk is fmt, not ds64",
      bytes: edited(valid, (b) => b.set(ascii("RF64"), 0)),
      layout: { error: "bad-ds64", message: /first chunk is "fmt "; "ds64" expected/ },
      scan: { error: "bad-ds64", message: /"ds64" expected/ },
    },
    {
      name: "rf64-ds64-too-short.rf64",
      what: "ds64 of 8 bytes",
      bytes: edited(rf64, (b) => setU32(b, 16, 8)),
      layout: { error: "bad-ds64", message: /ds64 chunk is 8 bytes; at least 24 expected/ },
      scan: { error: "bad-ds64", message: /at least 24/ },
    },
    {
      name: "rf64-ds64-size-past-eof.rf64",
      what: "ds64 chunk size larger than the file",
      bytes: edited(rf64, (b) => setU32(b, 16, 0x7ffffff0)),
      layout: { error: "bad-ds64", message: /ds64 chunk claims 2147483632 bytes/ },
      scan: { error: "bad-ds64", message: /claims 2147483632 bytes/ },
    },
    {
      name: "rf64-ds64-table-overflow.rf64",
      what: "ds64 table length of a million entries in a 28-byte chunk",
      bytes: edited(rf64, (b) => setU32(b, 44, 1_000_000)),
      layout: { error: "bad-ds64", message: /table claims 1000000 entries; room for 0/ },
      scan: { error: "bad-ds64", message: /1000000 entries/ },
    },
    {
      name: "rf64-ds64-size-above-2^53.rf64",
      what: "ds64 data size 2^64 − 1",
      bytes: edited(rf64, (b) => {
        setU32(b, rf64DataSize, 0xffffffff);
        setU32(b, rf64DataSize + 4, 0xffffffff);
      }),
      layout: { error: "bad-ds64", message: /above 2\^53/ },
      scan: { error: "bad-ds64", message: /2\^53/ },
    },
    {
      name: "rf64-ds64-data-past-eof.rf64",
      what: "ds64 data size of 1 TiB in a 4 KB file",
      bytes: edited(rf64, (b) => {
        setU32(b, rf64DataSize, 0);
        setU32(b, rf64DataSize + 4, 256);
      }),
      layout: { totalFrames: FRAMES, isTruncated: true, isDataSizeUnwritten: false },
      scan: { finding: "truncated", message: /claims 1099511627776 bytes but the file holds 4000/, durationSeconds: FRAMES / RATE_HZ },
    },
    {
      name: "one-sample.wav",
      what: "a single 16-bit sample",
      bytes: encodeWav([Float32Array.of(0.25)], { sampleRateHz: RATE_HZ, bitDepth: 16 }),
      layout: { totalFrames: 1, isTruncated: false, isDataSizeUnwritten: false },
      scan: { measured: true, durationSeconds: 1 / RATE_HZ },
    },
    {
      name: "float-nan-inf.wav",
      what: "32-bit float data holding NaN, +Inf and −Inf",
      bytes: float,
      layout: { totalFrames: 800, isTruncated: false, isDataSizeUnwritten: false },
      scan: { finding: "non-finite-samples", message: /^3 float sample\(s\) were NaN/, durationSeconds: 800 / RATE_HZ },
    },
    {
      name: "chunk-flood.wav",
      what: "5000 empty JUNK chunks before fmt",
      bytes: flood,
      layout: { error: "no-fmt-chunk", message: /no "fmt " chunk in the first 4096 chunks/ },
      scan: { error: "no-fmt-chunk", message: /4096 chunks/ },
    },
    {
      name: "bext-size-past-eof.bwf",
      what: "bext chunk before the audio claims more bytes than the file has",
      bytes: edited(encodeWav([tone()], { sampleRateHz: RATE_HZ, bitDepth: 16, bext: { description: "x" } }), (b) => setU32(b, 36 + 4, 0x00ffffff)),
      layout: { error: "truncated", message: /ends inside the "bext" chunk/ },
      scan: { error: "truncated", message: /"bext"/ },
    },
    // A recorder that stops (power cut, full card) before closing the file leaves the size fields it meant
    // to fill in at the end: 0, or the 0xFFFFFFFF placeholder. The audio after the data header is real, so it
    // is measured to the end of the file, with a `truncated` finding: the end of the recording is missing.
    {
      name: "crashed-recorder-size-0.wav",
      what: "RIFF and data sizes left at 0, audio after the data header",
      bytes: edited(valid, (b) => {
        setU32(b, 4, 0);
        setU32(b, DATA_SIZE_FIELD, 0);
      }),
      layout: { totalFrames: FRAMES, isTruncated: false, isDataSizeUnwritten: true },
      scan: { finding: "truncated", message: /size field holds 0.*0\.250 s measured to the end of the file/, durationSeconds: FRAMES / RATE_HZ },
    },
    {
      name: "crashed-recorder-size-ffffffff.wav",
      what: "RIFF and data sizes left at the 0xFFFFFFFF placeholder, audio after the data header",
      bytes: edited(valid, (b) => {
        setU32(b, 4, 0xffffffff);
        setU32(b, DATA_SIZE_FIELD, 0xffffffff);
      }),
      layout: { totalFrames: FRAMES, isTruncated: true, isDataSizeUnwritten: true },
      scan: { finding: "truncated", message: /size field holds 0xFFFFFFFF.*0\.250 s measured to the end of the file/, durationSeconds: FRAMES / RATE_HZ },
    },
    {
      name: "crashed-recorder-rf64.rf64",
      what: "RF64 whose ds64 data size was left at 0, audio after the data header",
      bytes: edited(rf64, (b) => {
        setU32(b, 20, 0);
        setU32(b, rf64DataSize, 0);
      }),
      layout: { totalFrames: FRAMES, isTruncated: false, isDataSizeUnwritten: true },
      scan: { finding: "truncated", message: /size field holds 0/, durationSeconds: FRAMES / RATE_HZ },
    },
  ];
}

/** The corpus files whose bytes the layout parser can be given, with what it should make of them. */
export function hostileByteCases(): ByteCase[] {
  return byteCases();
}

const isRoot = (): boolean => process.getuid?.() === 0;

/** Every case of the corpus (pure: nothing is written), and the ones left out on this machine. */
export function hostileCorpus(): HostileCorpus {
  const cases: HostileCase[] = byteCases().map((c) => ({ ...c, kind: "file" }));
  cases.push({
    name: "folder.wav",
    what: "a folder named like an audio file",
    kind: "folder",
    bytes: null,
    layout: null,
    scan: { error: "is-directory", message: /^folder\.wav: a folder with an audio file's name/ },
  });
  for (const [name, linkTarget] of [["loop-a.wav", "loop-b.wav"], ["loop-b.wav", "loop-a.wav"]]) {
    cases.push({ name, what: "symbolic links pointing at each other", kind: "symlink", linkTarget, bytes: null, layout: null, scan: { error: "symlink-loop", message: /symbolic link loop/ } });
  }
  const skipped: HostileCorpus["skipped"] = [];
  if (isRoot()) {
    // Root reads a mode-000 file anyway (CAP_DAC_OVERRIDE), so the case would test nothing.
    skipped.push({ name: "unreadable.wav", why: "running as root, which can read a chmod 000 file" });
  } else {
    cases.push({
      name: "unreadable.wav",
      what: "a valid WAV with mode 000",
      kind: "unreadable",
      bytes: validPcmWav(),
      layout: null,
      scan: { error: "permission-denied", message: /^unreadable\.wav: permission denied$/ },
    });
  }
  return { cases, skipped };
}

/** Writes the corpus into `dir` (an existing, empty folder) and returns it. */
export function writeHostileCorpus(dir: string, corpus: HostileCorpus = hostileCorpus()): HostileCorpus {
  for (const c of corpus.cases) {
    const target = path.join(dir, c.name);
    if (c.kind === "folder") mkdirSync(target);
    else if (c.kind === "symlink") symlinkSync(c.linkTarget ?? "", target);
    else {
      writeFileSync(target, c.bytes ?? new Uint8Array(0));
      if (c.kind === "unreadable") chmodSync(target, 0o000);
    }
  }
  return corpus;
}
