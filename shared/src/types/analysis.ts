/**
 * Contracts between the streaming reader (CLI), the analysers (shared/src/analysis, shared/src/spectral)
 * and the renderers (shared/src/render). Everything here is plain data over typed arrays.
 */
import type { Encoding, FileMetrics, Finding } from "./report.ts";

/** What an analyser needs to know about the stream before the first block. */
export interface StreamFormat {
  sampleRateHz: number;
  channels: number;
  bitDepth: number;
  encoding: Encoding;
  /** Frames the data chunk really holds (after truncation checks); used to lay out time axes. */
  totalFrames: number;
  /** WAVE_FORMAT_EXTENSIBLE speaker mask (which speaker each channel feeds), when the file has one. */
  channelMask?: number | null;
  /** Significant bits of integer PCM when fewer than `bitDepth` (20-bit audio in 24-bit words); else absent. */
  validBits?: number;
}

/**
 * One block of decoded audio. Planar: `channels[c][i]` is frame `i` of channel `c`,
 * full scale = ±1.0 (integers divided by 2^(bits−1); 8-bit unsigned re-centred).
 * Arrays may be longer than `frames` (reused buffers): read only `[0, frames)`.
 */
export interface AudioBlock {
  channels: Float32Array[];
  frames: number;
  /** Index in the file of this block's first frame. */
  startFrame: number;
}

/** A streaming measurement: fed every block once, in order, then finished once. */
export interface BlockAnalyser<Result> {
  push(block: AudioBlock): void;
  finish(): Result;
}

/** Level-domain results (issue #3): everything in FileMetrics but the spectral fields. */
export type LevelMetrics = Omit<FileMetrics, "bands" | "bandwidthHz" | "dominantFrequencyHz">;

export interface LevelAnalysisResult {
  metrics: LevelMetrics;
  findings: Finding[];
}

/**
 * Spectrogram aggregated into a fixed grid, bounded whatever the file length.
 * `db[col * rows + row]`: row 0 is the lowest frequency; NaN where a column got no frame.
 */
export interface SpectrogramGrid {
  columns: number;
  rows: number;
  db: Float32Array;
  /** Frequency at the centre of each row, Hz (log- or linear-spaced per `frequencyScale`). */
  rowFrequencyHz: Float32Array;
  frequencyScale: "log" | "linear";
  durationSeconds: number;
  sampleRateHz: number;
  /**
   * Where known from how the grid was made: 1 for a column whose dB values are exactly those of the column to
   * its left (a short file's frame spans many columns), so a pass over the cells may copy instead of compute.
   */
  readonly repeatsLeft?: Uint8Array;
}

/** Peak envelope for the overview strip: per column min and max over all channels. */
export interface WaveformEnvelope {
  columns: number;
  min: Float32Array;
  max: Float32Array;
  durationSeconds: number;
}

export interface SpectralAnalysisResult {
  metrics: Pick<FileMetrics, "bands" | "bandwidthHz" | "dominantFrequencyHz">;
  findings: Finding[];
  spectrogram: SpectrogramGrid;
  /** Present when per-channel spectrograms were asked for. */
  channelSpectrograms: SpectrogramGrid[] | null;
  waveform: WaveformEnvelope;
}

/** The spectral analysis told to build no images (createSpectralAnalyser's `images: false`): measures only. */
export type SpectralMeasuresResult = Omit<SpectralAnalysisResult, "spectrogram" | "channelSpectrograms" | "waveform"> & {
  spectrogram: null;
  channelSpectrograms: null;
  waveform: null;
};

/** An RGBA raster ready for PNG encoding (4 bytes a pixel, row-major, top row first). */
export interface RgbaImage {
  width: number;
  height: number;
  data: Uint8Array;
}
