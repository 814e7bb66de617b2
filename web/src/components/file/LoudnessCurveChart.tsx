import { useMemo } from "react";
import type uPlot from "uplot";
import type { FindingDto } from "@tidemark/shared/types/api";
import { formatDuration, formatLevel, formatTimestamp } from "../../format/units.ts";
import { UPlotChart, type ChartOptions } from "../charts/UPlotChart.tsx";
import { curveChartData, findingTimes, loudnessBand, type LoudnessBand, type LoudnessCurve, type ProfileLimits } from "./loudnessCurve.ts";

const MARKER_STROKE: Record<FindingDto["severity"], string> = { fail: "#c2412d", warn: "#b7791f", info: "#2b7bb9" };

/** uPlot options for the curve: the band (warn tolerance) is filled, target and fail edges drawn by a hook. */
export function loudnessChartOptions(band: LoudnessBand | null, findings: FindingDto[], selectedId: number | null): ChartOptions {
  const markers = findingTimes(findings);
  const series: uPlot.Series[] = [
    { label: "Time" },
    { label: "Momentary", stroke: "#6b8f96", width: 1, spanGaps: false },
    { label: "Short-term", stroke: "#123f45", width: 2, spanGaps: false },
  ];
  if (band) {
    series.push({ label: "Upper warn edge", stroke: "rgba(43,100,59,0.5)", width: 1, dash: [4, 4] });
    series.push({ label: "Lower warn edge", stroke: "rgba(43,100,59,0.5)", width: 1, dash: [4, 4] });
  }
  const drawOverlay = (u: uPlot) => {
    const { ctx, bbox } = u;
    ctx.save();
    ctx.beginPath();
    ctx.rect(bbox.left, bbox.top, bbox.width, bbox.height);
    ctx.clip();
    if (band) {
      const line = (value: number, colour: string, dash: number[]) => {
        const y = u.valToPos(value, "y", true);
        ctx.strokeStyle = colour;
        ctx.setLineDash(dash);
        ctx.lineWidth = 1.5 * devicePixelRatio;
        ctx.beginPath();
        ctx.moveTo(bbox.left, y);
        ctx.lineTo(bbox.left + bbox.width, y);
        ctx.stroke();
      };
      line(band.target, "#2b643b", []);
      line(band.failHigh, "#a02f1d", [2, 3]);
      line(band.failLow, "#a02f1d", [2, 3]);
    }
    ctx.setLineDash([]);
    for (const m of markers) {
      const x = u.valToPos(m.seconds, "x", true);
      ctx.strokeStyle = MARKER_STROKE[m.severity];
      ctx.lineWidth = (m.id === selectedId ? 3 : 1.5) * devicePixelRatio;
      ctx.beginPath();
      ctx.moveTo(x, bbox.top);
      ctx.lineTo(x, bbox.top + bbox.height);
      ctx.stroke();
    }
    ctx.restore();
  };
  return {
    height: 220,
    scales: { x: { time: false } },
    series,
    bands: band ? [{ series: [3, 4], fill: "rgba(43,100,59,0.12)" }] : [],
    axes: [
      // Ticks closer than a second (short files) need the fraction, or labels repeat.
      { values: (_u, ticks) => ticks.map((t) => (ticks.length > 1 && ticks[1] - ticks[0] < 1 ? formatTimestamp(t).replace(/0$/, "") : formatDuration(t))) },
      { label: "LUFS", values: (_u, ticks) => ticks.map((t) => formatLevel(t, "", 0)), size: 56 },
    ],
    legend: { show: true },
    cursor: { drag: { x: false, y: false } },
    hooks: { draw: [drawOverlay] },
  };
}

interface LoudnessCurveChartProps {
  curve: LoudnessCurve;
  limits: ProfileLimits | null;
  findings: FindingDto[];
  selectedId: number | null;
}

/** Momentary and short-term loudness over the whole file, the profile's target band, and where findings sit. */
export function LoudnessCurveChart({ curve, limits, findings, selectedId }: LoudnessCurveChartProps) {
  const band = useMemo(() => loudnessBand(limits), [limits]);
  const options = useMemo(() => loudnessChartOptions(band, findings, selectedId), [band, findings, selectedId]);
  const data = useMemo(() => curveChartData(curve, band) as uPlot.AlignedData, [curve, band]);
  const max = (values: Array<number | null>) => values.reduce<number | null>((m, v) => (v !== null && (m === null || v > m) ? v : m), null);
  const summary =
    `Loudness over ${formatDuration(curve.durationSeconds)}: highest momentary ${formatLevel(max(curve.momentaryLufs), "LUFS")}, ` +
    `highest short-term ${formatLevel(max(curve.shortTermLufs), "LUFS")}` +
    (band ? `; profile target ${formatLevel(band.target, "LUFS")} with ±${formatLevel(band.warnHigh - band.target, "LU")} before a warning.` : "; the profile sets no loudness target.");
  return (
    <div>
      <UPlotChart options={options} data={data} summary={summary} />
      <p className="mt-1 text-xs text-ink-muted">
        {band ? (
          <>
            Shaded: the profile&apos;s target {formatLevel(band.target, "LUFS")} ± {formatLevel(band.warnHigh - band.target, "LU")}; dotted red lines: ±
            {formatLevel(band.failHigh - band.target, "LU")} (fail). Vertical lines: findings.
          </>
        ) : (
          "The profile sets no loudness target. Vertical lines: findings."
        )}
      </p>
    </div>
  );
}
