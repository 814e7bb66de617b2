/**
 * Close-up capture and selection (issue #16): which samples the single pass keeps, within its budget,
 * and which findings get a close-up (most severe first, cap, budget, not-timed). The kept samples are
 * compared with the stream they came from, sample for sample.
 */
import { describe, expect, it } from "vitest";
import { createCloseupCapture, type CapturedSegment } from "../../shared/src/closeups/closeupCapture.ts";
import { closeupColumns, closeupFftSize, closeupSpectrogramGrid, closeupWaveform } from "../../shared/src/closeups/closeupImages.ts";
import { createSpectrumAnalyzer, type SpectrumAnalyzer } from "../../shared/src/spectral/fft.ts";
import { assembleGrid, createSpectrogramAccumulator, spectrogramRowLayout } from "../../shared/src/spectral/spectrogramGrid.ts";
import { evenSchedule, frameStart } from "../../shared/src/spectral/stftSchedule.ts";
import { selectCloseups } from "../../shared/src/closeups/closeupSelection.ts";
import { encodeWavExcerpt, excerptFormatFor } from "../../shared/src/closeups/wavExcerpt.ts";
import type { Finding } from "../../shared/src/types/report.ts";
import { DEFAULT_ANALYSIS_SETTINGS, type CloseupSettings } from "../../shared/src/types/settings.ts";
import { WaveFile } from "wavefile";

const RATE = 1000; // small rate: seconds stay readable as frames ÷ 1000
const SETTINGS: CloseupSettings = { ...DEFAULT_ANALYSIS_SETTINGS.closeups };

/** A ramp, so any sample's value says where it came from. */
function ramp(frames: number, channel: number): Float32Array {
  const x = new Float32Array(frames);
  for (let i = 0; i < frames; i++) x[i] = (i + channel * 1e5) / 1e6;
  return x;
}

/** Streams `seconds` of a two-channel ramp in blocks, calling `during(blockEnd)` after each block. */
function stream(seconds: number, settings: CloseupSettings, during: (capture: ReturnType<typeof createCloseupCapture>, blockEnd: number) => void, blockFrames = 250) {
  const total = seconds * RATE;
  const source = [ramp(total, 0), ramp(total, 1)];
  const capture = createCloseupCapture({ sampleRateHz: RATE, channels: 2, settings, silenceMinSeconds: 2, peakTrigger: null });
  for (let at = 0; at < total; at += blockFrames) {
    const frames = Math.min(blockFrames, total - at);
    capture.push({ channels: source.map((x) => x.subarray(at, at + frames)), frames, startFrame: at });
    during(capture, at + frames);
  }
  return { source, segments: capture.finish(), capture };
}

function finding(code: Finding["code"], severity: Finding["severity"], start: number | null, end: number | null = start): Finding {
  return { code, severity, channel: 0, startSeconds: start, endSeconds: end, message: code };
}

function covers(segments: CapturedSegment[], from: number, to: number): CapturedSegment | undefined {
  return segments.find((s) => s.startFrame <= from && s.startFrame + s.channels[0].length >= to);
}

describe("createCloseupCapture", () => {
  it("keeps the window around a candidate raised after the event (2 s before to 2 s after), sample for sample", () => {
    const { source, segments } = stream(60, SETTINGS, (c, end) => {
      // A dropout at 20.00–20.04 s, recognised when the block after it arrives.
      if (end === 20_250) c.candidate(20_000, 20_040, 3);
    });
    const seg = covers(segments, 18_000, 22_040);
    expect(seg).toBeDefined();
    const from = 18_000 - seg!.startFrame;
    for (const c of [0, 1]) expect(Array.from(seg!.channels[c].subarray(from, from + 4040))).toEqual(Array.from(source[c].subarray(18_000, 22_040)));
  });

  it("merges overlapping candidates into one segment", () => {
    const { segments } = stream(60, SETTINGS, (c, end) => {
      if (end === 10_250) c.candidate(10_000, 10_010, 3);
      if (end === 11_250) c.candidate(11_000, 11_010, 2);
    });
    // One for both (8 … 13.01 s) plus the ring's tail at the end of the file.
    expect(segments.filter((s) => s.startFrame < 50_000)).toHaveLength(1);
    expect(covers(segments, 8_000, 13_010)).toBeDefined();
  });

  it("holds no more than its budget: a worse candidate displaces a milder one, a milder one is refused", () => {
    // Budget for ≈ 10 s of stereo Float32 (80 kB): two 4 s windows fit, a third does not.
    const small = { ...SETTINGS, budgetBytes: 10 * RATE * 2 * 4 };
    let maxHeld = 0;
    const { segments } = stream(120, small, (c, end) => {
      maxHeld = Math.max(maxHeld, c.heldBytes);
      if (end === 10_250) c.candidate(10_000, 10_000, 1); // info
      if (end === 30_250) c.candidate(30_000, 30_000, 2); // warn
      if (end === 50_250) c.candidate(50_000, 50_000, 3); // fail: displaces the info one
      if (end === 70_250) c.candidate(70_000, 70_000, 1); // info: nothing milder to displace
    });
    // Ring (≤ budget) plus segments (≤ budget).
    expect(maxHeld).toBeLessThanOrEqual(2 * small.budgetBytes);
    expect(covers(segments, 8_000, 12_000)).toBeUndefined();
    expect(covers(segments, 28_000, 32_000)).toBeDefined();
    expect(covers(segments, 48_000, 52_000)).toBeDefined();
    expect(covers(segments, 68_000, 72_000)).toBeUndefined();
  });

  it("caps a window at maxSeconds", () => {
    const { segments } = stream(120, { ...SETTINGS, maxSeconds: 10 }, (c, end) => {
      if (end === 12_000) c.candidate(10_000, 11_000, 3);
      if (end >= 12_000 && end <= 80_000) c.candidate(10_000, end, 3); // a silence that keeps growing
    });
    const seg = segments.find((s) => s.startFrame === 8_000)!;
    expect(seg.channels[0].length).toBe(10 * RATE);
  });

  it("keeps the loudest sample's window when a peak trigger is set (peaks as the level windows report them)", () => {
    const total = 30 * RATE;
    const x = new Float32Array(total).fill(0.1);
    x[5_000] = 0.95;
    x[21_000] = 0.99; // louder, later: the candidate moves here
    const capture = createCloseupCapture({ sampleRateHz: RATE, channels: 1, settings: SETTINGS, silenceMinSeconds: 2, peakTrigger: { amplitude: 0.9, rank: 2 } });
    for (let at = 0; at < total; at += 500) {
      capture.push({ channels: [x.subarray(at, at + 500)], frames: 500, startFrame: at });
      let best = 0;
      for (let i = at; i < at + 500; i++) if (x[i] > x[best]) best = i;
      capture.peak(0, x[best], best);
    }
    const segments = capture.finish();
    expect(covers(segments, 19_000, 23_000)).toBeDefined();
    expect(covers(segments, 3_000, 7_000)).toBeUndefined();
  });
});

describe("selectCloseups", () => {
  const segments = (ranges: [number, number][]): CapturedSegment[] =>
    ranges.map(([from, to]) => ({ startFrame: from, channels: [ramp(to - from, 0).map((_, i) => from + i)] }));
  const base = { sampleRateHz: RATE, totalFrames: 100 * RATE, excerptBytesPerSample: 2, imageBytesEstimate: 0 };

  it("takes the most severe first, joins findings inside a chosen window, and says why the others are left out", () => {
    const findings = [
      finding("hum", "warn", null), // 0: no time
      finding("dual-mono", "info", 0, 100), // 1: the whole file
      finding("near-clip", "warn", 40), // 2: kept (second by severity)
      finding("dropout", "fail", 20, 20.04), // 3: kept first
      finding("dropout", "fail", 21, 21.01), // 4: inside 3's window → joins it
      finding("silent-gap", "warn", 60, 63), // 5: over the cap
      finding("clipping", "fail", 80), // 6: its samples were not kept
    ];
    const got = selectCloseups({ ...base, findings, segments: segments([[18_000, 23_000], [38_000, 42_000], [58_000, 65_000]]), settings: { ...SETTINGS, cap: 2 } });
    expect(got.plans.map((p) => [p.findings, p.startFrame, p.endFrame])).toEqual([
      [[3, 4], 18_000, 22_040],
      [[2], 38_000, 42_000],
    ]);
    expect(got.omitted).toEqual([
      { finding: 0, reason: "not-timed" },
      { finding: 1, reason: "not-timed" },
      { finding: 5, reason: "cap" },
      { finding: 6, reason: "budget" },
    ]);
    // The plan's samples are the window's, cut from the segment.
    expect(got.plans[0].channels[0][0]).toBe(18_000);
    expect(got.plans[0].channels[0].length).toBe(4040);
  });

  it("stops at the byte budget (excerpt bytes plus the image estimate)", () => {
    const findings = [finding("dropout", "fail", 20), finding("dropout", "fail", 40), finding("dropout", "fail", 60)];
    // Each window: 4 s × 1 channel × 2 bytes + 1000 = 9000 bytes; room for two.
    const got = selectCloseups({ ...base, imageBytesEstimate: 1000, findings, segments: segments([[0, 100_000]]), settings: { ...SETTINGS, budgetBytes: 18_500 } });
    expect(got.plans).toHaveLength(2);
    expect(got.omitted).toEqual([{ finding: 2, reason: "budget" }]);
  });

  it("clips windows to the file and to maxSeconds", () => {
    const findings = [finding("lead-silence", "info", 0, 5), finding("silent-gap", "warn", 50, 90)];
    const got = selectCloseups({ ...base, findings, segments: segments([[0, 100_000]]), settings: { ...SETTINGS, maxSeconds: 30 } });
    expect(got.plans.map((p) => [p.startFrame, p.endFrame])).toEqual([
      [0, 7_000],
      [48_000, 78_000],
    ]);
  });
});

describe("close-up pictures and excerpt", () => {
  it("lays one column per ≤ 10 ms and finds a 1 kHz tone in the right rows", () => {
    const rate = 48000;
    const frames = 4 * rate;
    expect(closeupColumns(frames, rate)).toEqual({ columns: 400, secondsPerColumn: 0.01 });
    expect(closeupColumns(4.005 * rate, rate).secondsPerColumn).toBeLessThanOrEqual(0.01);
    const x = new Float32Array(frames);
    for (let i = 0; i < frames; i++) x[i] = 0.5 * Math.sin((2 * Math.PI * 1000 * i) / rate);
    const grid = closeupSpectrogramGrid([x], rate, 400, 200, "log");
    let best = 0;
    for (let r = 0; r < grid.rows; r++) if (grid.db[200 * grid.rows + r] > grid.db[200 * grid.rows + best]) best = r;
    // 1024-point frames at 48 kHz: bins 46.9 Hz apart; a 0.5-peak sine reads −6.02 dB (fft.ts: a sine of
    // peak a reads a² in its bin) less the row's averaging.
    expect(Math.abs(grid.rowFrequencyHz[best] - 1000)).toBeLessThan(47);
    expect(grid.db[200 * grid.rows + best]).toBeGreaterThan(-8);
    const envelope = closeupWaveform([x], rate, 400);
    expect(envelope.max[200]).toBeCloseTo(0.5, 2);
    expect(envelope.min[200]).toBeCloseTo(-0.5, 2);
  });

  it("encodes an excerpt that wavefile (npm) reads back to the same 24-bit integers", () => {
    const left = Float32Array.from([0, 1 / 8388608, -1, 0.5, 8388607 / 8388608]);
    const right = Float32Array.from([-0.25, 0, 3 / 8388608, -4 / 8388608, 0.125]);
    const format = excerptFormatFor({ encoding: "pcm", bitDepth: 24, sampleRateHz: 48000, channels: 2 })!;
    const wav = new WaveFile(encodeWavExcerpt([left, right], 48000, format));
    const samples = wav.getSamples(false, Int32Array) as unknown as Int32Array[];
    expect(Array.from(samples[0])).toEqual(Array.from(left, (v) => Math.round(v * 8388608)));
    expect(Array.from(samples[1])).toEqual(Array.from(right, (v) => Math.round(v * 8388608)));
    expect((wav.fmt as { sampleRate: number }).sampleRate).toBe(48000);
  });

  it("averages the channels' powers exactly: two or four copies of a channel draw the mono grid to the bit, three channels the per-channel mean", () => {
    // closeupImages.ts sums the channels' powers in the transform and scales once when the share is a power
    // of two (IEEE 754: scaling by 2^-k is exact), else adds the scaled powers: both must equal the mean
    // computed the plain way, here from fft.ts's amplitudeSquared and the same accumulator.
    const rate = 48000;
    const frames = rate;
    const noise = (seed: number): Float32Array => {
      const x = new Float32Array(frames);
      let s = seed;
      for (let i = 0; i < frames; i++) {
        s = (s * 1103515245 + 12345) >>> 0;
        x[i] = Math.round((s / 2 ** 32 - 0.5) * 2 ** 23) / 2 ** 23;
      }
      return x;
    };
    const a = noise(1);
    const mono = closeupSpectrogramGrid([a], rate, 100, 80, "log");
    expect(Array.from(closeupSpectrogramGrid([a, a], rate, 100, 80, "log").db)).toEqual(Array.from(mono.db));
    expect(Array.from(closeupSpectrogramGrid([a, a, a, a], rate, 100, 80, "log").db)).toEqual(Array.from(mono.db));
    const three = [a, noise(2), noise(3)];
    const fftSize = closeupFftSize(frames, rate);
    const analyzer = createSpectrumAnalyzer(fftSize);
    const layout = spectrogramRowLayout(80, "log", rate, fftSize);
    const schedule = evenSchedule(frames, fftSize, Math.floor((frames - fftSize) / 100));
    const accumulator = createSpectrogramAccumulator({ columns: 100, layout, rowFrom: 0, rowTo: 80, aggregate: "max", binHz: rate / fftSize, binCount: analyzer.binCount, powerScale: 1, schedule, totalFrames: frames });
    const power = new Float64Array(analyzer.binCount);
    const mean = new Float64Array(analyzer.binCount);
    for (let k = 0; k < schedule.frameCount; k++) {
      const start = frameStart(schedule, k);
      mean.fill(0);
      for (const x of three) {
        analyzer.amplitudeSquared(x.subarray(start, start + fftSize), power);
        for (let b = 0; b < power.length; b++) mean[b] += power[b] / 3;
      }
      accumulator.addFrame(mean, k);
    }
    const reference = assembleGrid([{ accumulator }], 100, layout, frames / rate, rate);
    const shared = new Map<number, SpectrumAnalyzer>();
    expect(Array.from(closeupSpectrogramGrid(three, rate, 100, 80, "log", shared).db)).toEqual(Array.from(reference.db));
    // A second close-up with the analysers of the first draws the same grid.
    expect(shared.size).toBe(1);
    expect(Array.from(closeupSpectrogramGrid(three, rate, 100, 80, "log", shared).db)).toEqual(Array.from(reference.db));
  });

  it("interleaves three channels of 16-bit and of float excerpts as wavefile (npm) reads them back", () => {
    const channels = [Float32Array.from([0, 1 / 32768, -1, 0.5]), Float32Array.from([-0.25, 32767 / 32768, 3 / 32768, 0]), Float32Array.from([0.125, -2 / 32768, 0, -0.5])];
    const pcm = new WaveFile(encodeWavExcerpt(channels, 44100, { bitDepth: 16, float: false }));
    const ints = pcm.getSamples(false, Int32Array) as unknown as Int32Array[];
    for (let c = 0; c < 3; c++) expect(Array.from(ints[c])).toEqual(Array.from(channels[c], (v) => Math.round(v * 32768)));
    // wavefile reads a WAVE_FORMAT_EXTENSIBLE float stream as 32-bit integers: their bits are the floats.
    const float = new WaveFile(encodeWavExcerpt(channels, 44100, { bitDepth: 32, float: true }));
    const bits = float.getSamples(false, Float64Array) as unknown as Float64Array[];
    for (let c = 0; c < 3; c++) expect(Array.from(new Float32Array(Int32Array.from(bits[c]).buffer))).toEqual(Array.from(channels[c]));
    expect((float.fmt as { numChannels: number }).numChannels).toBe(3);
    // Two channels: a plain IEEE-float stream (format tag 3), which wavefile reads as floats.
    const stereo = new WaveFile(encodeWavExcerpt(channels.slice(0, 2), 44100, { bitDepth: 32, float: true }));
    const floats = stereo.getSamples(false, Float64Array) as unknown as Float64Array[];
    for (let c = 0; c < 2; c++) expect(Array.from(floats[c])).toEqual(Array.from(channels[c]));
  });

  it("writes no excerpt above 96 kHz or 8 channels, float for float and 32-bit sources", () => {
    expect(excerptFormatFor({ encoding: "pcm", bitDepth: 24, sampleRateHz: 192000, channels: 2 })).toBeNull();
    expect(excerptFormatFor({ encoding: "pcm", bitDepth: 16, sampleRateHz: 48000, channels: 10 })).toBeNull();
    expect(excerptFormatFor({ encoding: "float", bitDepth: 32, sampleRateHz: 96000, channels: 2 })).toEqual({ bitDepth: 32, float: true });
    expect(excerptFormatFor({ encoding: "pcm", bitDepth: 8, sampleRateHz: 22050, channels: 1 })).toEqual({ bitDepth: 16, float: false });
  });
});
