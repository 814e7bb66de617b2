/**
 * Writes the benchmark's inputs: 24-bit (or 16-bit) PCM noise, streamed to disk in fixed chunks so a 4 GB
 * RF64 file costs no more memory than a short one. Pink noise by Paul Kellet's economy filter on seeded
 * uniform white noise (a widely used approximation); white noise is the worst case for true peak.
 */
import { open } from "node:fs/promises";

export interface SynthOptions {
  path: string;
  seconds: number;
  sampleRateHz: number;
  channels: number;
  bitDepth: 16 | 24;
  noise: "pink" | "white";
  /** Target RMS, dBFS (pink noise at −20 dBFS peaks near −6 dBFS). */
  rmsDbfs: number;
  /** Write RF64 with a ds64 chunk (EBU Tech 3306) instead of RIFF; required above 4 GiB. */
  rf64?: boolean;
  seed?: number;
  /** Repeat the first this many seconds to the end (a 4.5 GB file is written in seconds, not a minute). */
  periodSeconds?: number;
}

const CHUNK_FRAMES = 1 << 16;
/** Kellet's economy filter on uniform [−1, 1) white noise has an RMS of about 1.719 (measured over 10^8 samples). */
const PINK_RMS = 1.719;
const WHITE_RMS = 1 / Math.sqrt(3);

function header(o: SynthOptions, frames: number): Uint8Array {
  const blockAlign = o.channels * (o.bitDepth / 8);
  const dataBytes = frames * blockAlign;
  const rf64 = o.rf64 === true;
  const size = 12 + (rf64 ? 36 : 0) + 24 + 8;
  const b = new Uint8Array(size);
  const v = new DataView(b.buffer);
  const ascii = (at: number, s: string) => {
    for (let i = 0; i < 4; i++) b[at + i] = s.charCodeAt(i);
  };
  let at = 0;
  ascii(at, rf64 ? "RF64" : "RIFF");
  v.setUint32(at + 4, rf64 ? 0xffffffff : size - 8 + dataBytes, true);
  ascii(at + 8, "WAVE");
  at += 12;
  if (rf64) {
    ascii(at, "ds64");
    v.setUint32(at + 4, 28, true);
    const riffSize = size - 8 + dataBytes;
    v.setUint32(at + 8, riffSize % 2 ** 32, true);
    v.setUint32(at + 12, Math.floor(riffSize / 2 ** 32), true);
    v.setUint32(at + 16, dataBytes % 2 ** 32, true);
    v.setUint32(at + 20, Math.floor(dataBytes / 2 ** 32), true);
    v.setUint32(at + 24, frames % 2 ** 32, true);
    v.setUint32(at + 28, Math.floor(frames / 2 ** 32), true);
    v.setUint32(at + 32, 0, true); // no table entries
    at += 36;
  }
  ascii(at, "fmt ");
  v.setUint32(at + 4, 16, true);
  v.setUint16(at + 8, 1, true);
  v.setUint16(at + 10, o.channels, true);
  v.setUint32(at + 12, o.sampleRateHz, true);
  v.setUint32(at + 16, o.sampleRateHz * blockAlign, true);
  v.setUint16(at + 20, blockAlign, true);
  v.setUint16(at + 22, o.bitDepth, true);
  at += 24;
  ascii(at, "data");
  v.setUint32(at + 4, rf64 ? 0xffffffff : dataBytes, true);
  return b;
}

/** Writes the file; resolves to its size in bytes. */
export async function synthesiseWav(o: SynthOptions): Promise<number> {
  const frames = Math.round(o.seconds * o.sampleRateHz);
  const blockAlign = o.channels * (o.bitDepth / 8);
  if (!o.rf64 && 44 + frames * blockAlign > 0xffffffff) throw new Error("more than 4 GiB of audio needs rf64: true");
  const file = await open(o.path, "w");
  try {
    const head = header(o, frames);
    await file.write(head, 0, head.length, 0);
    let position = head.length;
    await synthesisePcm(o, async (bytes) => {
      await file.write(bytes, 0, bytes.length, position);
      position += bytes.length;
    });
    return position;
  } finally {
    await file.close();
  }
}

/**
 * The same samples as synthesiseWav, as raw little-endian PCM handed to `put` in chunks (a pipe into an
 * encoder, so a 4-hour input never touches the disk); `put` must be done with a chunk when it resolves.
 */
export async function synthesisePcm(o: Omit<SynthOptions, "path" | "rf64">, put: (bytes: Uint8Array) => Promise<void>): Promise<void> {
  const frames = Math.round(o.seconds * o.sampleRateHz);
  const bytesPerSample = o.bitDepth / 8;
  const blockAlign = o.channels * bytesPerSample;
  const gain = 10 ** (o.rmsDbfs / 20) / (o.noise === "pink" ? PINK_RMS : WHITE_RMS);
  const fullScale = o.bitDepth === 24 ? 8388608 : 32768;
  const maxCode = fullScale - 1;
  // mulberry32 state and Kellet filter state per channel, so channels are independent noises.
  const state = new Uint32Array(o.channels);
  const filter = new Float64Array(3 * o.channels);
  for (let c = 0; c < o.channels; c++) state[c] = (o.seed ?? 7) + 0x9e3779b9 * (c + 1);
  const out = new Uint8Array(CHUNK_FRAMES * blockAlign);
  const periodChunks = o.periodSeconds ? Math.max(1, Math.round((o.periodSeconds * o.sampleRateHz) / CHUNK_FRAMES)) : Infinity;
  const period: Uint8Array[] = [];
  for (let done = 0, chunkIndex = 0; done < frames; chunkIndex++) {
    const n = Math.min(CHUNK_FRAMES, frames - done);
    if (chunkIndex >= periodChunks) {
      await put(period[chunkIndex % periodChunks].subarray(0, n * blockAlign));
      done += n;
      continue;
    }
    for (let c = 0; c < o.channels; c++) {
      let a = state[c];
      let b0 = filter[3 * c], b1 = filter[3 * c + 1], b2 = filter[3 * c + 2];
      for (let i = 0, j = c * bytesPerSample; i < n; i++, j += blockAlign) {
        a = (a + 0x6d2b79f5) >>> 0;
        let t = Math.imul(a ^ (a >>> 15), a | 1);
        t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
        const white = (((t ^ (t >>> 14)) >>> 0) / 4294967296) * 2 - 1;
        let v = white;
        if (o.noise === "pink") {
          b0 = 0.99765 * b0 + white * 0.099046;
          b1 = 0.963 * b1 + white * 0.2965164;
          b2 = 0.57 * b2 + white * 1.0526913;
          v = b0 + b1 + b2 + white * 0.1848;
        }
        let q = Math.round(v * gain * fullScale);
        if (q > maxCode) q = maxCode;
        else if (q < -fullScale) q = -fullScale;
        out[j] = q & 0xff;
        out[j + 1] = (q >> 8) & 0xff;
        if (bytesPerSample === 3) out[j + 2] = (q >> 16) & 0xff;
      }
      state[c] = a;
      filter[3 * c] = b0;
      filter[3 * c + 1] = b1;
      filter[3 * c + 2] = b2;
    }
    const bytes = n * blockAlign;
    if (periodChunks !== Infinity) period.push(out.slice(0, bytes));
    await put(out.subarray(0, bytes));
    done += n;
  }
}
