import type { ReactNode } from "react";
import type { FileDetailDto } from "@tidemark/shared/types/api";
import {
  formatAudioFormat,
  formatBytes,
  formatChannels,
  formatContainer,
  formatDuration,
  formatEncoding,
  formatHz,
  formatLevel,
  formatNumber,
  formatSampleRate,
  NOT_MEASURED,
} from "../../format/units.ts";

function Panel({ title, children }: { title: string; children: ReactNode }) {
  return (
    <section aria-label={title} className="rounded-md border border-line bg-surface p-3">
      <h3 className="mb-2 text-base">{title}</h3>
      {children}
    </section>
  );
}

function Rows({ rows }: { rows: [string, ReactNode][] }) {
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
      {rows.map(([term, value]) => (
        <div key={term} className="contents">
          <dt className="text-ink-muted">{term}</dt>
          <dd className="text-right font-medium tabular-nums">{value}</dd>
        </div>
      ))}
    </dl>
  );
}

function percent(value: number): string {
  return `${value < 0.01 && value > 0 ? value.toExponential(1) : value.toFixed(3)} %`;
}

/** Metrics grouped the way a reviewer reads them: levels, loudness, spectrum, stereo, format. */
export function MetricsPanels({ file }: { file: FileDetailDto }) {
  const m = file.metrics;
  const f = file.format;
  const formatRows: [string, ReactNode][] = [
    ["Container", f ? formatContainer(f.container) : NOT_MEASURED],
    ["Encoding", f ? formatEncoding(f.encoding) : NOT_MEASURED],
    ["Sample rate", f ? formatSampleRate(f.sampleRateHz) : NOT_MEASURED],
    ["Bit depth", f ? `${f.bitDepth} bit` : NOT_MEASURED],
    ["Channels", f ? formatChannels(f.channels) : NOT_MEASURED],
    ["Duration", formatDuration(f?.durationSeconds ?? file.durationSeconds)],
    ["Size", formatBytes(file.sizeBytes)],
  ];
  if (!m) {
    return (
      <div className="grid gap-3 md:grid-cols-2">
        <Panel title="Format">
          <Rows rows={formatRows} />
        </Panel>
        <p className="rounded-md border border-line bg-surface p-3 text-ink-muted">
          No measurements: {file.error ? `the file could not be analysed (${file.error.message}).` : "the scan did not record any."}
        </p>
      </div>
    );
  }
  return (
    <div className="grid gap-3 sm:grid-cols-2 2xl:grid-cols-3">
      <Panel title="Levels">
        <Rows
          rows={[
            ["Sample peak", formatLevel(m.samplePeakDbfs, "dBFS")],
            ["True peak", formatLevel(m.truePeakDbtp, "dBTP")],
            ["RMS (loudest channel)", formatLevel(m.rmsDbfs, "dBFS")],
            ["Clipped samples", formatNumber(m.clippedSamples)],
            ["Clip events", formatNumber(m.clipEvents)],
            ["DC offset (largest)", percent(m.dcOffsetPercent)],
          ]}
        />
      </Panel>
      <Panel title="Loudness">
        <Rows
          rows={[
            ["Integrated", formatLevel(m.integratedLufs, "LUFS")],
            ["Loudness range", formatNumber(m.loudnessRangeLu, "LU", 1)],
            ["Max momentary", formatLevel(m.maxMomentaryLufs, "LUFS")],
            ["Max short-term", formatLevel(m.maxShortTermLufs, "LUFS")],
          ]}
        />
      </Panel>
      <Panel title="Spectrum">
        <Rows
          rows={[
            ["Bandwidth", formatHz(m.bandwidthHz)],
            ["Dominant frequency", formatHz(m.dominantFrequencyHz)],
            ["Noise floor", formatLevel(m.noiseFloorDbfs, "dBFS")],
            ["Effective bit depth", m.effectiveBitDepth === null ? "n/a (float)" : `${m.effectiveBitDepth} bit`],
          ]}
        />
      </Panel>
      <Panel title="Stereo and channels">
        <Rows rows={[["Correlation", m.stereoCorrelation === null ? "n/a (mono)" : formatNumber(m.stereoCorrelation, "", 2)]]} />
        <table className="mt-2 w-full text-sm">
          <caption className="sr-only">Per-channel levels</caption>
          <thead>
            <tr className="border-b border-line text-ink-muted">
              <th scope="col" className="py-1 text-left font-medium">
                Ch
              </th>
              <th scope="col" className="py-1 pl-2 text-right font-medium">
                Peak <abbr title="decibels relative to full scale">dBFS</abbr>
              </th>
              <th scope="col" className="py-1 pl-2 text-right font-medium">
                True peak <abbr title="decibels true peak">dBTP</abbr>
              </th>
              <th scope="col" className="py-1 pl-2 text-right font-medium">
                RMS <abbr title="decibels relative to full scale">dBFS</abbr>
              </th>
              <th scope="col" className="py-1 pl-2 text-right font-medium">
                Clipped
              </th>
            </tr>
          </thead>
          <tbody>
            {m.channels.map((c, i) => (
              <tr key={i} className="border-b border-line last:border-b-0">
                <th scope="row" className="py-1 text-left font-medium">
                  {i + 1}
                </th>
                <td className="py-1 text-right">{formatLevel(c.samplePeakDbfs, "")}</td>
                <td className="py-1 text-right">{formatLevel(c.truePeakDbtp, "")}</td>
                <td className="py-1 text-right">{formatLevel(c.rmsDbfs, "")}</td>
                <td className="py-1 text-right">{c.clippedSamples}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </Panel>
      <Panel title="Format">
        <Rows rows={formatRows} />
        <p className="mt-2 text-xs text-ink-muted">{formatAudioFormat(f)}</p>
      </Panel>
    </div>
  );
}
