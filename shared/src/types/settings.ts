/**
 * Analysis settings. Profiles may override any of them; the defaults are the values
 * the issues name (common practice unless a source is given beside the field).
 */
export interface AnalysisSettings {
  /** A clip event is a run of at least this many samples at full scale (common practice: 3). */
  clipRunSamples: number;
  /** Samples within this many dB of full scale count as clipped (0.01 dB). */
  clipToleranceDb: number;
  /** Peaks above this (dBFS) without clip runs give `near-clip` (−0.1 dBFS). */
  nearClipDbfs: number;
  /** Silence threshold, dBFS (−60). */
  silenceThresholdDbfs: number;
  /** Minimum length of a lead/tail/inner silence, s (2). */
  silenceMinSeconds: number;
  /** Minimum run of exact digital zero inside signal that counts as a dropout, s (0.001). */
  dropoutMinSeconds: number;
  /**
   * Whether a silent LFE channel counts as a dead channel (false): a 5.1/7.1 programme often has nothing
   * for the LFE (common practice), so by default it is left out of the dead-channel check.
   */
  deadChannelIncludesLfe: boolean;
  /**
   * A click's AR prediction residual must stand this far above the residual's robust local level
   * (1.4826 × median absolute residual), dB. See analysis/clicks.ts for the default's measured false alarms.
   */
  clickThresholdDb: number;
  /** Minimum run of identical non-zero samples that counts as stuck (16). */
  stuckMinSamples: number;
  /** RMS difference between channels that gives `channel-imbalance`, dB (3). */
  imbalanceDb: number;
  /** Correlation above which equal-level channels are `dual-mono` (0.999). */
  dualMonoCorrelation: number;
  /** Correlation below which a stereo file is `polarity-inverted` (−0.95). */
  polarityInvertedCorrelation: number;
  /** STFT size; null = 2048 at 44.1/48 kHz, scaled with the sample rate. */
  fftSize: number | null;
  /** STFT hop; null = fftSize / 2. */
  hopSize: number | null;
  /** Bandwidth: highest frequency within this many dB of the floor trend (40). */
  bandwidthThresholdDb: number;
  /** Hum: 50/60 Hz harmonics must stand this far above the local floor, dB (12). */
  humProminenceDb: number;
  spectrogram: {
    width: number;
    height: number;
    frequencyScale: "log" | "linear";
    aggregate: "max" | "mean";
    perChannel: boolean;
  };
  /** Close-ups around findings (issue #16); `tidemark scan --no-closeups` turns them off. */
  closeups: CloseupSettings;
}

export interface CloseupSettings {
  /** At most this many close-ups a file, most severe findings first (20). */
  cap: number;
  /** Window before a finding's start and after its end, s (2 and 2). */
  beforeSeconds: number;
  afterSeconds: number;
  /** Longest window, s (30): a longer finding shows its first 30 s. */
  maxSeconds: number;
  /**
   * Per-file budget, bytes (20 MB): bounds both the samples kept in memory during the pass and the
   * close-up files written (excerpts plus images, estimated before they are written).
   */
  budgetBytes: number;
}

export const DEFAULT_ANALYSIS_SETTINGS: AnalysisSettings = {
  clipRunSamples: 3,
  clipToleranceDb: 0.01,
  nearClipDbfs: -0.1,
  silenceThresholdDbfs: -60,
  silenceMinSeconds: 2,
  dropoutMinSeconds: 0.001,
  deadChannelIncludesLfe: false,
  clickThresholdDb: 40,
  stuckMinSamples: 16,
  imbalanceDb: 3,
  dualMonoCorrelation: 0.999,
  polarityInvertedCorrelation: -0.95,
  fftSize: null,
  hopSize: null,
  bandwidthThresholdDb: 40,
  humProminenceDb: 12,
  spectrogram: { width: 1600, height: 600, frequencyScale: "log", aggregate: "max", perChannel: false },
  closeups: { cap: 20, beforeSeconds: 2, afterSeconds: 2, maxSeconds: 30, budgetBytes: 20_000_000 },
};
