import { useState, type CSSProperties, type KeyboardEvent, type PointerEvent } from "react";
import type { FindingDto } from "@tidemark/shared/types/api";
import type { Severity } from "@tidemark/shared/types/report";
import { wracklineCssGradient } from "@tidemark/shared/render/colourMap";
import { SPECTROGRAM_DB_RANGE } from "@tidemark/shared/render/spectrogramImage";
import { formatTimestamp } from "../../format/units.ts";
import { cellAt, readoutOf, type GridCell, type LevelGrid, type Readout } from "./levelGrid.ts";
import { dbColour } from "./levelColour.ts";
import { placeFindings, plotAreaInset, type TimedFinding, SPECTROGRAM_MARGINS, WAVEFORM_MARGINS, type Margins, type NaturalSize } from "./plotGeometry.ts";

const MARKER_FILL: Record<Severity, string> = {
  fail: "var(--color-marker-fail)",
  warn: "var(--color-marker-warn)",
  info: "var(--color-marker-info)",
};

const WIDE_SPAN_PERCENT = 15;
const LANE_HEIGHT_PX = 16;

interface MarkerLayerProps {
  findings: FindingDto[];
  durationSeconds: number;
  selectedId: number | null;
  onSelect: (id: number) => void;
  /** Only one layer carries the clickable handles; the other repeats the spans for the eye. */
  interactive: boolean;
}

function markerLabel(finding: TimedFinding): string {
  const channel = finding.channel !== null ? `, channel ${finding.channel + 1}` : "";
  return `${finding.code} at ${formatTimestamp(finding.startSeconds)}${channel} (${finding.severity})`;
}

/**
 * Each finding is a span (edges, light tint) that never takes the pointer, plus, on the interactive
 * layer, a small handle at its start: spans of different channels often overlap exactly.
 */
function MarkerLayer({ findings, durationSeconds, selectedId, onSelect, interactive }: MarkerLayerProps) {
  const placed = placeFindings(findings, durationSeconds);
  return (
    <>
      {placed.map(({ finding, leftPercent, widthPercent }) => {
        const isSelected = finding.id === selectedId;
        const fill = widthPercent > WIDE_SPAN_PERCENT ? "bg-transparent" : "bg-[color-mix(in_srgb,var(--marker)_14%,transparent)]";
        const style = {
          left: `${leftPercent}%`,
          width: `max(${widthPercent}%, ${isSelected ? 4 : 2}px)`,
          "--marker": isSelected ? "var(--color-marker-selected)" : MARKER_FILL[finding.severity],
        } as CSSProperties;
        return (
          <span
            key={`span-${finding.id}`}
            aria-hidden="true"
            className={`pointer-events-none absolute inset-y-0 -translate-x-px border-x-2 border-[var(--marker)] ${isSelected ? "z-10 bg-white/20" : fill}`}
            style={style}
          />
        );
      })}
      {interactive &&
        placed.map(({ finding, leftPercent, lane }) => {
          const isSelected = finding.id === selectedId;
          const label = markerLabel(finding);
          return (
            <button
              key={`handle-${finding.id}`}
              type="button"
              aria-label={label}
              aria-pressed={isSelected}
              data-finding-marker={finding.id}
              title={label}
              onClick={() => onSelect(finding.id)}
              className={`absolute z-20 h-3.5 w-3 -translate-x-1/2 cursor-pointer rounded-sm border border-black/80 ${
                isSelected ? "scale-125 outline-2 outline-offset-1 outline-white" : ""
              } focus-visible:outline-[var(--color-marker-selected)]`}
              style={{
                left: `${leftPercent}%`,
                top: `${2 + lane * LANE_HEIGHT_PX}px`,
                backgroundColor: isSelected ? "var(--color-marker-selected)" : MARKER_FILL[finding.severity],
              }}
            />
          );
        })}
    </>
  );
}

interface PlotImageProps {
  src: string;
  alt: string;
  margins: Margins;
  markers: Omit<MarkerLayerProps, "interactive">;
  interactive: boolean;
  missingText: string;
  /** Pointer position over the plot area as fractions (0–1) of its width and height; null when it leaves. */
  onPointer?: (at: { fx: number; fy: number } | null) => void;
  /** The open close-up's window and playhead, shown on the whole file's time axis. */
  focus?: OverviewFocus | null;
  /** The read-out's cell, drawn as a cross-hair, and keys that move it (for the keyboard). */
  cursor?: { cell: GridCell | null; columns: number; rows: number; onKey: (event: KeyboardEvent<HTMLDivElement>) => void };
}

export interface OverviewFocus {
  startSeconds: number;
  endSeconds: number;
  playheadSeconds: number | null;
}

function FocusLayer({ focus, durationSeconds }: { focus: OverviewFocus; durationSeconds: number }) {
  const pct = (s: number) => Math.min(100, Math.max(0, (s / durationSeconds) * 100));
  return (
    <>
      <span
        aria-hidden="true"
        data-overview-window
        className="pointer-events-none absolute inset-y-0 border-y-2 border-[#7cf3ff]/80 bg-[#7cf3ff]/10"
        style={{ left: `${pct(focus.startSeconds)}%`, width: `max(${pct(focus.endSeconds) - pct(focus.startSeconds)}%, 3px)` }}
      />
      {focus.playheadSeconds !== null && (
        <span aria-hidden="true" data-overview-playhead className="pointer-events-none absolute inset-y-0 w-px bg-[#7cf3ff]" style={{ left: `${pct(focus.playheadSeconds)}%` }} />
      )}
    </>
  );
}

function PlotImage({ src, alt, margins, markers, interactive, missingText, onPointer, cursor, focus }: PlotImageProps) {
  const [size, setSize] = useState<NaturalSize | null>(null);
  const [failed, setFailed] = useState(false);
  if (failed) {
    return <p role="alert" className="rounded bg-fail-soft px-3 py-2 text-sm text-fail">{missingText}</p>;
  }
  return (
    <div className="relative">
      <img
        src={src}
        alt={alt}
        className="block h-auto w-full rounded bg-[#101418]"
        onLoad={(e) => setSize({ width: e.currentTarget.naturalWidth, height: e.currentTarget.naturalHeight })}
        onError={() => setFailed(true)}
      />
      {size && size.width > 0 && size.height > 0 && markers.durationSeconds > 0 && (
        <div
          className="absolute"
          style={plotAreaInset(margins, size)}
          data-plot-area
          onPointerMove={
            onPointer &&
            ((e: PointerEvent<HTMLDivElement>) => {
              const rect = e.currentTarget.getBoundingClientRect();
              if (rect.width > 0 && rect.height > 0) onPointer({ fx: (e.clientX - rect.left) / rect.width, fy: (e.clientY - rect.top) / rect.height });
            })
          }
          onPointerLeave={onPointer && (() => onPointer(null))}
          tabIndex={cursor ? 0 : undefined}
          role={cursor ? "group" : undefined}
          aria-label={cursor ? "Spectrogram read-out: arrow keys move the cross-hair (Shift: 10 steps), Escape hides it" : undefined}
          onKeyDown={cursor?.onKey}
        >
          {focus && markers.durationSeconds > 0 && <FocusLayer focus={focus} durationSeconds={markers.durationSeconds} />}
          {cursor?.cell && (
            <span
              aria-hidden="true"
              data-crosshair
              className="pointer-events-none absolute z-30 size-2.5 -translate-x-1/2 -translate-y-1/2 rounded-full border-2 border-white shadow-[0_0_0_1px_black]"
              style={{
                left: `${((cursor.cell.column + 0.5) / cursor.columns) * 100}%`,
                top: `${((cursor.rows - 1 - cursor.cell.row + 0.5) / cursor.rows) * 100}%`,
              }}
            />
          )}
          <MarkerLayer {...markers} interactive={interactive} />
        </div>
      )}
    </div>
  );
}

interface SpectrogramViewProps {
  spectrogramUrl: string | null;
  waveformUrl: string | null;
  path: string;
  durationSeconds: number | null;
  findings: FindingDto[];
  selectedId: number | null;
  onSelect: (id: number) => void;
  /** The level grid behind the spectrogram's colours; with it, the pointer reads time, frequency and level. */
  levelGrid?: LevelGrid | null;
  focus?: OverviewFocus | null;
}

/** Frequencies to the hertz below 10 kHz: the read-out is checked against a known tone. */
export function formatReadoutHz(hz: number): string {
  return hz >= 10_000 ? `${(hz / 1000).toFixed(2)} kHz` : `${Math.round(hz)} Hz`;
}

/** The colour the PNG used for this level: the shared palette over the renderer's own dB range. */
function readoutColour(readout: Readout): string {
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  return dbColour(readout.levelDbfs ?? minDb, minDb, maxDb);
}

function ReadoutLine({ grid, readout }: { grid: LevelGrid | null | undefined; readout: Readout | null }) {
  if (!grid) return null;
  if (!readout) return <p className="px-1 text-xs text-white/70" data-readout="none">Point at the spectrogram to read time, frequency and level.</p>;
  const level = readout.levelDbfs === null ? `\u2264 \u2212${Math.abs(grid.dbMin)} dBFS` : `${readout.levelDbfs < 0 ? "\u2212" : ""}${Math.abs(readout.levelDbfs).toFixed(1)} dBFS`;
  return (
    <p
      className="flex flex-wrap items-center gap-x-4 px-1 font-mono text-xs text-white"
      data-readout
      data-seconds={readout.seconds.toFixed(4)}
      data-frequency-hz={readout.frequencyHz.toFixed(2)}
      data-level-dbfs={readout.levelDbfs === null ? "" : readout.levelDbfs.toFixed(2)}
    >
      <span>Time {formatTimestamp(readout.seconds)}</span>
      <span>Frequency {formatReadoutHz(readout.frequencyHz)}</span>
      <span className="inline-flex items-center gap-1">
        <span aria-hidden="true" className="inline-block h-3 w-3 rounded-sm border border-white/40" style={{ backgroundColor: readoutColour(readout) }} />
        Level {level}
      </span>
    </p>
  );
}

/** The server's spectrogram with its waveform strip below, both with finding markers on the same time axis. */
export function SpectrogramView({ spectrogramUrl, waveformUrl, path, durationSeconds, findings, selectedId, onSelect, levelGrid, focus }: SpectrogramViewProps) {
  const markers = { findings, durationSeconds: durationSeconds ?? 0, selectedId, onSelect };
  const [cell, setCell] = useState<GridCell | null>(null);
  const readout: Readout | null = levelGrid && cell && cell.column < levelGrid.columns && cell.row < levelGrid.rows ? readoutOf(levelGrid, cell) : null;
  // Fractions of the plot area, so the contract's formula runs on a unit plot (§2).
  const onPointer = (at: { fx: number; fy: number } | null) => {
    setCell(levelGrid && at ? cellAt(levelGrid, { left: 0, top: 0, width: 1, height: 1 }, at.fx, at.fy) : null);
  };
  const onKey = (event: KeyboardEvent<HTMLDivElement>) => {
    if (!levelGrid) return;
    const step = event.shiftKey ? 10 : 1;
    const move: Record<string, [number, number]> = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, step], ArrowDown: [0, -step] };
    if (event.key === "Escape") {
      setCell(null);
      return;
    }
    const delta = move[event.key];
    if (!delta) return;
    event.preventDefault();
    const from = cell ?? { column: Math.floor(levelGrid.columns / 2), row: Math.floor(levelGrid.rows / 2) };
    setCell({
      column: Math.min(levelGrid.columns - 1, Math.max(0, from.column + (cell ? delta[0] : 0))),
      row: Math.min(levelGrid.rows - 1, Math.max(0, from.row + (cell ? delta[1] : 0))),
    });
  };
  if (!spectrogramUrl && !waveformUrl) {
    return (
      <p className="rounded-md border border-dashed border-line-strong bg-surface px-4 py-6 text-center text-ink-muted">
        No spectrogram was uploaded for this file. Scan with <code className="font-mono">--spectrograms</code> to get one.
      </p>
    );
  }
  return (
    <figure className="rounded-md border border-line bg-[#101418] p-2">
      <div className="space-y-1">
        {spectrogramUrl && (
          <PlotImage
            src={spectrogramUrl}
            alt={`Spectrogram of ${path}: frequency against time, with ${findings.length} finding markers`}
            margins={SPECTROGRAM_MARGINS}
            markers={markers}
            interactive
            focus={focus}
            onPointer={levelGrid ? onPointer : undefined}
            cursor={levelGrid ? { cell, columns: levelGrid.columns, rows: levelGrid.rows, onKey } : undefined}
            missingText="The spectrogram image could not be loaded. It may have been removed from storage; reload to try again."
          />
        )}
        {waveformUrl && (
          <PlotImage
            src={waveformUrl}
            alt={`Waveform of ${path}`}
            margins={WAVEFORM_MARGINS}
            markers={markers}
            interactive={!spectrogramUrl}
            focus={focus}
            missingText="The waveform image could not be loaded; reload to try again."
          />
        )}
      </div>
      <ReadoutLine grid={levelGrid} readout={readout} />
      <figcaption className="mt-2 flex flex-wrap gap-x-4 gap-y-1 px-1 text-xs text-white/85">
        <span>Markers:</span>
        <LegendSwatch color="var(--color-marker-fail)" label="fail" />
        <LegendSwatch color="var(--color-marker-warn)" label="warn" />
        <LegendSwatch color="var(--color-marker-info)" label="info" />
        <LegendSwatch color="var(--color-marker-selected)" label="selected" />
        {spectrogramUrl && <LevelLegend />}
      </figcaption>
    </figure>
  );
}

function LegendSwatch({ color, label }: { color: string; label: string }) {
  return (
    <span className="inline-flex items-center gap-1">
      <span aria-hidden="true" className="inline-block h-3 w-1.5 rounded-sm" style={{ backgroundColor: color }} />
      {label}
    </span>
  );
}

const dbText = (db: number): string => (db < 0 ? `\u2212${-db}` : String(db));

/** The spectrogram's level colours (Tidemark's Wrackline map, as in the PNG's own scale bar), quietest left. */
function LevelLegend() {
  const { minDb, maxDb } = SPECTROGRAM_DB_RANGE;
  return (
    <span className="inline-flex items-center gap-1 sm:ml-auto" data-level-legend>
      <span>Level:</span>
      <span>{dbText(minDb)}</span>
      <span
        role="img"
        aria-label={`colour scale from ${dbText(minDb)} dBFS, dark rust, through olive and green to ${dbText(maxDb)} dBFS, pale foam`}
        className="inline-block h-3 w-28 rounded-sm"
        style={{ backgroundImage: wracklineCssGradient("to right") }}
      />
      <span>{dbText(maxDb)} dBFS</span>
    </span>
  );
}
