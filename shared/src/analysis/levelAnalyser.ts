/**
 * The level-domain analysis of issue #3, one streaming pass over planar blocks: sample and true peak,
 * RMS, DC offset, loudness (integrated, momentary, short-term, range), clipping, silence, dead channels,
 * dropouts, stuck samples, stereo relations, effective bit depth and the noise floor. Each measure lives
 * in its own module; this file only feeds them in order and assembles the report's LevelMetrics.
 *
 * Findings carry a default severity that profiles re-judge. `true-peak-over`, `loudness-off-target` and
 * `dc-offset` depend on a profile's limits, so they come from the profile's judge, not from here.
 */
import type { AudioBlock, BlockAnalyser, LevelAnalysisResult, LevelMetrics, StreamFormat } from "../types/analysis.ts";
import type { ChannelMetrics, Finding } from "../types/report.ts";
import type { AnalysisSettings } from "../types/settings.ts";
import { createBitDepthMeter, paddedBitDepthFinding } from "./bitDepth.ts";
import { createChannelLevelTotals, dcOffsetPercent, rmsAmplitude } from "./channelLevels.ts";
import { createClickDetector } from "./clicks.ts";
import { clipRegionFinding, createClipDetector, nearClipFinding } from "./clipping.ts";
import { amplitudeToDb, dbOrNull } from "./decibels.ts";
import { createDropoutDetector } from "./dropouts.ts";
import { FindingCollector } from "./findings.ts";
import { createLevelWindows, type LevelWindow } from "./levelWindows.ts";
import { createLoudnessMeter, type LoudnessHopListener } from "./loudness.ts";
import { createNoiseFloorEstimator } from "./noiseFloor.ts";
import { createSilenceDetector } from "./silence.ts";
// Loudness weights and the LFE silence leaves out come from one channel-layout rule (speakers.ts).
import { lfeChannelIndex, loudnessChannelWeights } from "./speakers.ts";
import { createStereoAnalyser } from "./stereo.ts";
import { createStuckSampleDetector } from "./stuckSamples.ts";
import { createTruePeakMeter } from "./truePeak.ts";
import { createValueRunTracker } from "./valueRuns.ts";

/** Optional observers for what is learnt during the pass (close-ups and the loudness curve, issue #16). */
export interface LevelAnalyserHooks {
  /** Momentary and short-term power at every loudness hop (loudness.ts), the values its maxima come from. */
  onLoudnessHop?: LoudnessHopListener;
  /** Each finding as it is raised during the pass (before the per-code bound of FindingCollector). */
  onFinding?: (f: Finding) => void;
  /** An event a detector will only judge at the end (a dropout, a click), as soon as it is seen (frames). */
  onCandidate?: (code: "dropout" | "click", startFrame: number, endFrame: number) => void;
  /** A silent run long enough to be a finding, as it grows (frames). */
  onSilentRun?: (startFrame: number, endFrame: number) => void;
  /** Each 50 ms level window (per-channel peaks and where they are), read during the call only. */
  onLevelWindow?: (w: LevelWindow) => void;
}

export function createLevelAnalyser(format: StreamFormat, settings: AnalysisSettings, hooks: LevelAnalyserHooks = {}): BlockAnalyser<LevelAnalysisResult> {
  validateFormat(format);
  const { sampleRateHz, channels } = format;
  const findings = new FindingCollector();
  const onFinding = hooks.onFinding;
  const add = onFinding
    ? (f: Finding) => {
        onFinding(f);
        findings.add(f);
      }
    : (f: Finding) => findings.add(f);

  const loudness = createLoudnessMeter(sampleRateHz, channels, loudnessChannelWeights(channels, format.channelMask), hooks.onLoudnessHop ?? null);
  const truePeak = createTruePeakMeter(sampleRateHz, channels);
  const clipping = createClipDetector(format, settings, (region) => add(clipRegionFinding(region, sampleRateHz)));
  const bitDepth = createBitDepthMeter(format);
  const onCandidate = hooks.onCandidate;
  const clicks = createClickDetector(sampleRateHz, channels, settings, onCandidate ? (s, e) => onCandidate("click", s, e) : null);
  const totals = createChannelLevelTotals(channels);
  const silence = createSilenceDetector(sampleRateHz, channels, settings, lfeChannelIndex(channels, format.channelMask), hooks.onSilentRun ?? null);
  const noiseFloor = createNoiseFloorEstimator(channels);
  const dropouts = createDropoutDetector(sampleRateHz, channels, settings, add, onCandidate ? (s, e) => onCandidate("dropout", s, e) : null);
  const stuck = createStuckSampleDetector(format, settings, add);
  const runs = createValueRunTracker(channels, Math.min(dropouts.minFrames, stuck.minFrames), (run) => {
    if (run.value === 0) dropouts.addRun(run);
    else stuck.addRun(run);
  });
  const stereo = channels >= 2 ? createStereoAnalyser(sampleRateHz, settings) : null;
  const onLevelWindow = hooks.onLevelWindow;
  const windows = createLevelWindows(sampleRateHz, channels, (w) => {
    onLevelWindow?.(w);
    totals.add(w);
    silence.add(w);
    noiseFloor.add(w);
    dropouts.addWindow(w);
    stereo?.addWindow(w);
  });

  let framesSeen = 0;
  let isFinished = false;

  return {
    push(block: AudioBlock): void {
      if (isFinished) throw new Error("level analyser: push() after finish()");
      const frames = block.frames;
      if (frames <= 0) return;
      if (block.channels.length < channels) {
        throw new Error(`level analyser: block has ${block.channels.length} channel(s), the stream ${channels}`);
      }
      if (block.startFrame !== framesSeen) {
        throw new Error(`level analyser: blocks must arrive in order; expected frame ${framesSeen}, got ${block.startFrame}`);
      }
      const input = block.channels;
      // Per-sample detectors first, so that run candidates exist before the windows that judge them. True
      // peak before clipping: its running maximum bounds every sample, so unclipped blocks are not rescanned.
      dropouts.beginBlock(input, frames);
      runs.push(input, frames);
      dropouts.endBlock();
      truePeak.push(input, frames);
      clipping.push(input, frames, truePeak.runningPeak);
      bitDepth.push(input, frames);
      clicks.push(input, frames);
      stereo?.push(input, frames);
      loudness.push(input, frames);
      windows.push(input, frames);
      framesSeen += frames;
    },

    finish(): LevelAnalysisResult {
      if (isFinished) throw new Error("level analyser: finish() called twice");
      isFinished = true;
      runs.finish();
      clipping.finish();
      windows.finish();
      dropouts.finish();
      const duration = framesSeen / sampleRateHz;
      const loud = loudness.finish();
      const peaks = truePeak.finish();
      const effectiveBitDepth = bitDepth.finish();
      for (const f of silence.finish(framesSeen)) add(f);
      for (const f of clicks.finish().findings) add(f);
      const stereoResult = stereo ? stereo.finish(silence.channelHasSignal, add) : null;

      const perChannel: ChannelMetrics[] = [];
      let samplePeak = 0;
      let truePeakMax = 0;
      let rmsMax = 0;
      let dcMax = 0;
      let clippedSamples = 0;
      let clipEvents = 0;
      for (let c = 0; c < channels; c++) {
        const peak = totals.peakAbs[c];
        const rms = rmsAmplitude(totals, c);
        const dc = dcOffsetPercent(totals, c);
        const tp = Math.max(peaks.peakAmplitude[c], peak);
        perChannel.push({
          samplePeakDbfs: dbOrNull(amplitudeToDb(peak)),
          truePeakDbtp: dbOrNull(amplitudeToDb(tp)),
          rmsDbfs: dbOrNull(amplitudeToDb(rms)),
          dcOffsetPercent: dc,
          clippedSamples: clipping.clippedSamples[c],
        });
        samplePeak = Math.max(samplePeak, peak);
        truePeakMax = Math.max(truePeakMax, tp);
        rmsMax = Math.max(rmsMax, rms);
        dcMax = Math.max(dcMax, dc);
        clippedSamples += clipping.clippedSamples[c];
        clipEvents += clipping.clipEvents[c];
        const nearClip = nearClipFinding(c, peak, totals.peakFrame[c], clipping.clipEvents[c], settings.nearClipDbfs, sampleRateHz);
        if (nearClip) add(nearClip);
      }
      const padded = paddedBitDepthFinding(effectiveBitDepth, format.validBits ?? format.bitDepth, duration);
      if (padded) add(padded);

      const metrics: LevelMetrics = {
        samplePeakDbfs: dbOrNull(amplitudeToDb(samplePeak)),
        truePeakDbtp: dbOrNull(amplitudeToDb(truePeakMax)),
        rmsDbfs: dbOrNull(amplitudeToDb(rmsMax)),
        integratedLufs: dbOrNull(loud.integratedLufs),
        loudnessRangeLu: loud.loudnessRangeLu,
        maxMomentaryLufs: dbOrNull(loud.maxMomentaryLufs),
        maxShortTermLufs: dbOrNull(loud.maxShortTermLufs),
        clippedSamples,
        clipEvents,
        dcOffsetPercent: dcMax,
        noiseFloorDbfs: dbOrNull(noiseFloor.finish()),
        stereoCorrelation: stereoResult?.correlation ?? null,
        effectiveBitDepth,
        channels: perChannel,
      };
      return { metrics, findings: sortFindings(findings.finish()) };
    },
  };
}

function validateFormat(format: StreamFormat): void {
  if (!Number.isInteger(format.channels) || format.channels < 1) {
    throw new Error(`level analyser: channels must be a positive integer, got ${format.channels}`);
  }
  if (!(format.sampleRateHz > 0) || !Number.isFinite(format.sampleRateHz)) {
    throw new Error(`level analyser: sampleRateHz must be a positive number, got ${format.sampleRateHz}`);
  }
  if (format.encoding === "pcm" && ![8, 16, 24, 32].includes(format.bitDepth)) {
    throw new Error(`level analyser: PCM bitDepth must be 8, 16, 24 or 32, got ${format.bitDepth}`);
  }
}

/** Time order (whole-file findings, which start at 0 or have no time, first), then code for stability. */
function sortFindings(list: Finding[]): Finding[] {
  return list.sort((a, b) => (a.startSeconds ?? -1) - (b.startSeconds ?? -1) || a.code.localeCompare(b.code) || (a.channel ?? -1) - (b.channel ?? -1));
}
