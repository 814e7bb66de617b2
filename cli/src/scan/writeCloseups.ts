/**
 * Writes a file's review artefacts beside its PNGs (issue #16): the overview's level grid, the loudness
 * curve, and per close-up a detailed spectrogram, a waveform strip and a WAV excerpt, cut from the
 * samples the single pass kept (shared/src/closeups). Returns the report's fields for them.
 */
import { imagesOf, type FileAnalysisResult } from "@tidemark/shared/engine/fileAnalysis";
import { formatTimestamp } from "@tidemark/shared/analysis/findings";
import { closeupColumns, closeupSpectrogramGrid, closeupWaveform } from "@tidemark/shared/closeups/closeupImages";
import { selectCloseups } from "@tidemark/shared/closeups/closeupSelection";
import { levelGridJson } from "@tidemark/shared/closeups/levelGrid";
import { encodeWavExcerpt, excerptFormatFor } from "@tidemark/shared/closeups/wavExcerpt";
import { SPECTROGRAM_MARGINS, WAVEFORM_MARGINS } from "@tidemark/shared/render/layout";
import { renderSpectrogramImage } from "@tidemark/shared/render/spectrogramImage";
import { renderWaveformImage } from "@tidemark/shared/render/waveformImage";
import type { SpectrumAnalyzer } from "@tidemark/shared/spectral/fft";
import type { RgbaImage } from "@tidemark/shared/types/analysis";
import type { AudioFormat, Closeup, FileReport, Finding } from "@tidemark/shared/types/report";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { ARTEFACT_SUFFIXES, artefactPaths, closeupSuffixes, type SpectrogramTarget } from "./spectrogramPaths.ts";

/** Node's base64 encoder: the level grid's ≈ 1 MB of levels in about a millisecond (shared/'s own is pure JS). */
const bufferBase64 = (bytes: Uint8Array): string => Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString("base64");

export type CloseupFields = Required<Pick<FileReport, "levelGrid" | "loudnessCurve" | "closeups" | "closeupsOmitted">>;

export async function writeCloseups(o: {
  analysed: FileAnalysisResult;
  findings: Finding[];
  format: AudioFormat;
  target: SpectrogramTarget;
  relPath: string;
  settings: AnalysisSettings;
  waveformHeightPx: number;
  /**
   * Paints one PNG here and deflates and writes it on libuv's pool (the caller also waits for every write
   * before the file counts as done): after the pass the other core is free, so close-ups cost this thread
   * only their painting (issue #16's +15 %).
   */
  writePng(file: string, paint: () => RgbaImage): Promise<void>;
  /** Writes a file without waiting for it, like writePng. */
  write(file: string, bytes: string | Uint8Array): Promise<void>;
}): Promise<CloseupFields> {
  const { analysed, findings, format, target, relPath, settings } = o;
  const paths = artefactPaths(target, relPath);
  const rate = format.sampleRateHz;

  o.write(paths.abs(ARTEFACT_SUFFIXES.levelGrid), JSON.stringify(levelGridJson(imagesOf(analysed).spectrogram, bufferBase64)));
  let loudnessCurve: string | null = null;
  if (analysed.loudnessCurve) {
    o.write(paths.abs(ARTEFACT_SUFFIXES.loudnessCurve), JSON.stringify(analysed.loudnessCurve));
    loudnessCurve = paths.shown(ARTEFACT_SUFFIXES.loudnessCurve);
  }

  const excerptFormat = excerptFormatFor(format);
  const selection = selectCloseups({
    findings,
    segments: analysed.closeupSegments ?? [],
    settings: settings.closeups,
    sampleRateHz: rate,
    totalFrames: Math.round(format.durationSeconds * rate),
    excerptBytesPerSample: excerptFormat ? excerptFormat.bitDepth / 8 : 0,
  });

  const closeups: Closeup[] = [];
  const analyzers = new Map<number, SpectrumAnalyzer>();
  // A close-up's spectrogram is deflated on the pool while its waveform and excerpt are made here; the next
  // starts once its files are written. With every close-up in flight at once their images and excerpts piled
  // up (≈ 30 MB more peak RSS on the bench's 600 s file with 10 close-ups), and with one close-up still in
  // flight while the next was drawn ≈ 13 MB (medians of 5, measured 5 December 2026): the scan's memory
  // target (≤ 150 MB) matters more than those milliseconds.
  const inFlight: Promise<void>[] = [];
  for (const [k, plan] of selection.plans.entries()) {
    const frames = plan.endFrame - plan.startFrame;
    const startSeconds = plan.startFrame / rate;
    const { columns, secondsPerColumn } = closeupColumns(frames, rate);
    // Markers in the window's own time: the plot's axis runs from its start.
    const markers = plan.findings.map((i) => shift(findings[i], startSeconds));
    // The file is named on the page around it; a narrow close-up has room for its times only.
    const title = `${formatTimestamp(startSeconds)} to ${formatTimestamp(plan.endFrame / rate)}`;
    const suffix = closeupSuffixes(k);
    const spectrogramWidth = columns + SPECTROGRAM_MARGINS.leftPx + SPECTROGRAM_MARGINS.rightPx;
    const waveformWidth = columns + WAVEFORM_MARGINS.leftPx + WAVEFORM_MARGINS.rightPx;
    const { frequencyScale } = settings.spectrogram;
    const height = closeupHeightPx(settings.spectrogram.height);
    const plotRows = height - SPECTROGRAM_MARGINS.topPx - SPECTROGRAM_MARGINS.bottomPx;
    inFlight.length = 0;
    inFlight.push(o.writePng(paths.abs(suffix.spectrogram), () =>
      renderSpectrogramImage(closeupSpectrogramGrid(plan.channels, rate, columns, plotRows, frequencyScale, analyzers), { width: spectrogramWidth, height, markers, title }),
    ));
    inFlight.push(o.writePng(paths.abs(suffix.waveform), () => renderWaveformImage(closeupWaveform(plan.channels, rate, columns), { width: waveformWidth, height: o.waveformHeightPx, markers })));
    let excerpt: string | null = null;
    if (excerptFormat) {
      inFlight.push(o.write(paths.abs(suffix.excerpt), encodeWavExcerpt(plan.channels, rate, excerptFormat)));
      excerpt = paths.shown(suffix.excerpt);
    }
    await Promise.all(inFlight);
    closeups.push({
      findings: plan.findings,
      startSeconds,
      endSeconds: plan.endFrame / rate,
      secondsPerColumn,
      spectrogram: paths.shown(suffix.spectrogram),
      waveform: paths.shown(suffix.waveform),
      excerpt,
      excerptMediaType: excerpt ? "audio/wav" : null,
      excerptSampleRateHz: excerpt ? rate : null,
    });
  }
  return { levelGrid: paths.shown(ARTEFACT_SUFFIXES.levelGrid), loudnessCurve, closeups, closeupsOmitted: selection.omitted };
}

/**
 * Close-ups are half the overview's height (300 px by default): they are about time, and painting and
 * PNG-encoding ten of them at full height cost more than issue #16's +15 % of the scan (measured).
 */
export function closeupHeightPx(overviewHeightPx: number): number {
  return Math.max(CLOSEUP_MIN_HEIGHT_PX, Math.round(overviewHeightPx / 2));
}
/** Room for the axes and a plot of ≥ 64 rows. */
const CLOSEUP_MIN_HEIGHT_PX = SPECTROGRAM_MARGINS.topPx + SPECTROGRAM_MARGINS.bottomPx + 64;

function shift(f: Finding, by: number): Finding {
  return {
    ...f,
    startSeconds: f.startSeconds === null ? null : Math.max(0, f.startSeconds - by),
    endSeconds: f.endSeconds === null ? null : Math.max(0, f.endSeconds - by),
  };
}
