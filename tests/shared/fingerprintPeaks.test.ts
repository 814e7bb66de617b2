/**
 * The peak picker (shared/src/fingerprint/landmarks.ts) against a literal reading of its definition,
 * written here bin by bin without any of its shortcuts (row maxima, per-frame top N, the candidate
 * ring): a peak is the strict maximum of its ±freqRadius × ±timeRadius neighbourhood, ties going to
 * the earlier (frame, bin); each frame keeps its peaksPerWindow strongest, and one of those is
 * kept when fewer than peaksPerWindow of those of the frames within ±rankRadius are stronger. Inputs are quantised to a few
 * levels so that ties are everywhere, and one case plants NaN and infinities, so every branch of the
 * fast path and its fallback is compared with the definition.
 */
import { describe, expect, it } from "vitest";
import { createPeakPicker, type PeakPickerParams } from "../../shared/src/fingerprint/landmarks.ts";
import { createPeakRowsSimd } from "../../shared/src/fingerprint/peakRowsSimd.ts";
import { createSlidingMax } from "../../shared/src/fingerprint/slidingMax.ts";
import { FINGERPRINT_GRID } from "../../shared/src/fingerprint/fingerprinter.ts";
import { seededRandom } from "../fixtures/synth.ts";

/** The definition, O(everything): returns kept peaks as "frame:bin" in output order. */
function referencePeaks(spectra: Float32Array[], p: PeakPickerParams): string[] {
  const { bins, freqRadiusBins: df, timeRadiusFrames: dt, floor, peaksPerWindow: n, rankRadiusFrames: rr } = p;
  const frames = spectra.length;
  const isPeak = (k: number, b: number): boolean => {
    const v = spectra[k][b];
    if (v < floor) return false;
    for (let j = Math.max(0, k - dt); j <= Math.min(frames - 1, k + dt); j++) {
      for (let c = Math.max(0, b - df); c <= Math.min(bins - 1, b + df); c++) {
        if (j === k && c === b) continue;
        const s = spectra[j][c];
        // Same comparisons as the picker: NaN neither beats nor is beaten.
        if (s > v || (s === v && (j < k || (j === k && c < b)))) return false;
      }
    }
    return true;
  };
  // Each frame's n strongest peaks, strongest first, the lower bin first among equals.
  const perFrame: { frame: number; bin: number; value: number }[][] = [];
  for (let k = 0; k < frames; k++) {
    const list: { frame: number; bin: number; value: number }[] = [];
    for (let b = 0; b < bins; b++) {
      if (!isPeak(k, b)) continue;
      const v = spectra[k][b];
      // A stable, strongest-first top n; a newcomer to a full list takes the last place, then moves up.
      if (list.length === n && v <= list[n - 1].value) continue;
      if (list.length === n) list.pop();
      let i = list.length;
      while (i > 0 && list[i - 1].value < v) i--;
      list.splice(i, 0, { frame: k, bin: b, value: v });
    }
    perFrame.push(list);
  }
  const out: string[] = [];
  for (let k = 0; k < frames; k++) {
    for (const c of perFrame[k]) {
      let stronger = 0;
      for (let g = Math.max(0, k - rr); g <= Math.min(frames - 1, k + rr); g++) {
        for (const o of perFrame[g]) {
          if (o.value > c.value || (o.value === c.value && (g < k || (g === k && o.bin < c.bin)))) stronger++;
        }
      }
      if (stronger < n) out.push(`${k}:${c.bin}`);
    }
  }
  return out;
}

function pick(spectra: Float32Array[], p: PeakPickerParams, simd: boolean): string[] {
  const picker = createPeakPicker(p, { simd });
  for (const s of spectra) picker.pushFrame(s);
  const { frames, bins, count } = picker.finish();
  return Array.from({ length: count }, (_, i) => `${frames[i]}:${bins[i]}`);
}

/** Random spectra with values on a coarse grid of `levels` (many ties), floor-crossing included. */
function quantisedSpectra(seed: number, frames: number, bins: number, levels: number): Float32Array[] {
  const rnd = seededRandom(seed);
  return Array.from({ length: frames }, () => Float32Array.from({ length: bins }, () => Math.floor(rnd() * levels) / levels));
}

const SMALL: PeakPickerParams = { bins: 40, freqRadiusBins: 3, timeRadiusFrames: 2, floor: 0.2, peaksPerWindow: 3, rankRadiusFrames: 4 };

describe.each([
  ["WebAssembly SIMD", true],
  ["JavaScript", false],
])("fingerprint: peak picker (%s) against its definition", (_, simd) => {
  it.each([
    ["few levels (ties everywhere)", 11, 4],
    ["some levels", 12, 16],
    ["continuous values", 13, 1 << 24],
  ])("%s: the same peaks in the same order", (_, seed, levels) => {
    const spectra = quantisedSpectra(seed, 120, SMALL.bins, levels);
    const expected = referencePeaks(spectra, SMALL);
    expect(expected.length).toBeGreaterThan(5);
    expect(pick(spectra, SMALL, simd)).toEqual(expected);
  });

  it("with the fingerprint's own parameters", () => {
    const p = FINGERPRINT_GRID.peaks;
    const spectra = quantisedSpectra(14, 60, p.bins, 64).map((s) => s.map((v) => v * p.floor * 1e6));
    expect(pick(spectra, p, simd)).toEqual(referencePeaks(spectra, p));
  });

  it("treats NaN and infinities as the definition's comparisons do", () => {
    const spectra = quantisedSpectra(15, 80, SMALL.bins, 8);
    spectra[10][5] = Number.NaN;
    spectra[30][20] = Number.POSITIVE_INFINITY;
    spectra[31][21] = Number.POSITIVE_INFINITY;
    spectra[50].fill(Number.NaN, 0, 10);
    spectra[79][39] = Number.NaN; // in the last frames, evaluated by finish()
    const got = pick(spectra, SMALL, simd);
    expect(got).toContain("10:5"); // NaN is never beaten, so it stands as a peak
    expect(got).toEqual(referencePeaks(spectra, SMALL));
  });

  it("has no frequency or time neighbourhood at radius 0", () => {
    const p = { ...SMALL, freqRadiusBins: 0, timeRadiusFrames: 0 };
    const spectra = quantisedSpectra(16, 30, SMALL.bins, 8);
    expect(pick(spectra, p, simd)).toEqual(referencePeaks(spectra, p));
  });
});

describe("fingerprint: sliding maximum", () => {
  it("equals the maximum of each clipped window, and flags NaN", () => {
    const rnd = seededRandom(17);
    for (const [length, radius] of [[1, 0], [1, 3], [7, 3], [40, 3], [344, 10], [25, 30]]) {
      const x = Float32Array.from({ length: length + 5 }, () => Math.floor(rnd() * 100) - 50);
      const out = new Float32Array(length + 2);
      const m = createSlidingMax(length, radius);
      expect(m.apply(x, 5, out, 2)).toBe(true);
      for (let i = 0; i < length; i++) {
        let want = -Infinity;
        for (let c = Math.max(0, i - radius); c <= Math.min(length - 1, i + radius); c++) want = Math.max(want, x[5 + c]);
        expect(out[2 + i], `length ${length}, radius ${radius}, at ${i}`).toBe(want);
      }
      x[5 + (length >> 1)] = Number.NaN;
      expect(m.apply(x, 5, out, 2)).toBe(false);
    }
    expect(() => createSlidingMax(4, 1).apply(new Float32Array(4), 1, new Float32Array(4), 0)).toThrow(/4 values from 1 of 4/);
    expect(() => createSlidingMax(0, 1)).toThrow(/length ≥ 1/);
  });

  it("is the same in WebAssembly SIMD (which runs here), row by row in a ring, with candidates above the floor", () => {
    const rnd = seededRandom(18);
    for (const [bins, radius, depth] of [[344, 10, 5], [7, 3, 1], [41, 0, 3], [13, 20, 2], [4, 1, 5]]) {
      const simd = createPeakRowsSimd(bins, depth, radius);
      expect(simd, "WebAssembly SIMD missing: the comparison would be vacuous").not.toBeNull();
      const js = createSlidingMax(bins, radius);
      const want = new Float32Array(bins);
      for (let round = 0; round < 3 * depth; round++) {
        const at = (round % depth) * bins;
        const row = Float32Array.from({ length: bins }, () => Math.floor(rnd() * 30) / 7);
        if (round === 2) row[bins >> 1] = Number.NaN;
        simd!.rows.set(row, at);
        expect(simd!.updateMax(at), `round ${round}`).toBe(round !== 2);
        if (round === 2) continue;
        js.apply(row, 0, want, 0);
        expect(Array.from(simd!.rowMax.subarray(at, at + bins)), `bins ${bins}, radius ${radius}, round ${round}`).toEqual(Array.from(want));
        // The floor compares as float64, as in JavaScript: just above the float32 1/7, it shuts out the
        // rows' 1/7, which a float32 comparison (the floor rounded to 1/7) would let in.
        const floor = Math.fround(1 / 7) * (1 + 2 ** -40);
        const expected = [];
        for (let b = 0; b < bins; b++) if (row[b] === want[b] && row[b] >= floor) expected.push(b);
        const count = simd!.candidates(at, floor);
        expect(Array.from(simd!.candidateBins.subarray(0, count))).toEqual(expected);
      }
    }
  });
});

