import { useMemo } from "react";
import { Link, useNavigate } from "react-router-dom";
import type uPlot from "uplot";
import type { BatchOverviewDto } from "@tidemark/shared/types/api";
import { formatLevel } from "../../format/units.ts";
import { UPlotChart, type ChartOptions } from "../charts/UPlotChart.tsx";
import { findingBars, loudnessRanking, truePeakRanking, type RankedMeasure } from "./batchOverview.ts";

const SEVERITY_BAR: Record<string, string> = { fail: "bg-fail", warn: "bg-warn", info: "bg-harbour" };

interface Limits {
  /** Shaded band (warn tolerance) and dashed fail edges, or a single ceiling line. */
  band?: { low: number; high: number };
  lines: Array<{ value: number; colour: string; dash: number[] }>;
}

/** Hovering a dot names its file in the legend; clicking it opens the file. */
interface DotFiles {
  label: (index: number) => string;
  open: (index: number) => void;
}

function rankOptions(unit: string, limits: Limits, xLabel: string, dots: DotFiles): ChartOptions {
  const draw = (u: uPlot) => {
    const { ctx, bbox } = u;
    ctx.save();
    if (limits.band) {
      const top = u.valToPos(limits.band.high, "y", true);
      const bottom = u.valToPos(limits.band.low, "y", true);
      ctx.fillStyle = "rgba(43,100,59,0.12)";
      ctx.fillRect(bbox.left, Math.min(top, bottom), bbox.width, Math.abs(bottom - top));
    }
    for (const line of limits.lines) {
      const y = u.valToPos(line.value, "y", true);
      ctx.strokeStyle = line.colour;
      ctx.setLineDash(line.dash);
      ctx.lineWidth = 1.5 * devicePixelRatio;
      ctx.beginPath();
      ctx.moveTo(bbox.left, y);
      ctx.lineTo(bbox.left + bbox.width, y);
      ctx.stroke();
    }
    ctx.restore();
  };
  const lineValues = limits.lines.map((l) => l.value);
  return {
    height: 140,
    scales: {
      x: { time: false },
      // Keep the limits in view even when every file is well inside them.
      y: { range: (_u, min, max) => [Math.min(min, ...lineValues) - 1, Math.max(max, ...lineValues) + 1] },
    },
    series: [
      { label: "File", value: (_u, _v, _s, index) => (index === null ? "—" : dots.label(index)) },
      { label: unit, stroke: "#123f45", paths: () => null, points: { show: true, size: 6, fill: "#123f45" } },
    ],
    axes: [{ label: xLabel, values: (_u, ticks) => ticks.map((t) => (Number.isInteger(t) ? String(t) : "")) }, { label: unit, size: 52 }],
    legend: { show: true, live: true },
    cursor: { drag: { x: false, y: false } },
    hooks: {
      drawClear: [draw],
      ready: [
        (u: uPlot) =>
          u.over.addEventListener("click", () => {
            if (u.cursor.idx !== null && u.cursor.idx !== undefined) dots.open(u.cursor.idx);
          }),
      ],
    },
  };
}

interface RankChartProps {
  title: string;
  unit: string;
  ranking: RankedMeasure;
  limits: Limits;
  limitText: string;
  xLabel: string;
}

function RankChart({ title, unit, ranking, limits, limitText, xLabel }: RankChartProps) {
  const navigate = useNavigate();
  const options = useMemo(
    () =>
      rankOptions(unit, limits, xLabel, {
        label: (i) => ranking.files[i]?.path ?? "—",
        open: (i) => {
          const file = ranking.files[i];
          if (file) void navigate(`/files/${file.id}`);
        },
      }),
    [unit, limits, xLabel, ranking, navigate],
  );
  const data = useMemo(() => [ranking.ranks, ranking.values] as uPlot.AlignedData, [ranking]);
  const summary = `${title}: ${ranking.values.length} files measured${limits.lines.length ? `, ${ranking.outside} outside the profile's limits` : ""}. ${limitText}. Hover a dot to name its file; click to open it.`;
  return (
    <div className="min-w-0 flex-1">
      <h3 className="text-sm font-semibold">{title}</h3>
      <p className="text-xs text-ink-muted">
        {!limits.lines.length ? null : ranking.outside > 0 ? <strong className="text-fail">{ranking.outside} outside the limits · </strong> : "all within the limits · "}
        {limitText}
        {ranking.missing > 0 && ` · ${ranking.missing} not measured`}
      </p>
      {ranking.values.length > 0 ? <UPlotChart options={options} data={data} summary={summary} /> : <p className="py-4 text-sm text-ink-muted">No file has this measure.</p>}
    </div>
  );
}

/** The batch at a glance: loudness and true peak of its files against the profile, and what was found how often. */
export function BatchOverviewStrip({ overview }: { overview: BatchOverviewDto }) {
  const loudness = useMemo(() => loudnessRanking(overview), [overview]);
  const peaks = useMemo(() => truePeakRanking(overview), [overview]);
  const bars = useMemo(() => findingBars(overview), [overview]);
  const target = overview.profileLimits?.integratedLufs ?? null;
  const ceiling = overview.profileLimits?.truePeakMaxDbtp ?? null;
  const loudnessLimits = useMemo<Limits>(
    () =>
      target
        ? {
            band: { low: target.target - target.warnToleranceLu, high: target.target + target.warnToleranceLu },
            lines: [
              { value: target.target, colour: "#2b643b", dash: [] },
              { value: target.target - target.failToleranceLu, colour: "#a02f1d", dash: [2, 3] },
              { value: target.target + target.failToleranceLu, colour: "#a02f1d", dash: [2, 3] },
            ],
          }
        : { lines: [] },
    [target],
  );
  const peakLimits = useMemo<Limits>(() => (ceiling !== null ? { lines: [{ value: ceiling, colour: "#a02f1d", dash: [4, 3] }] } : { lines: [] }), [ceiling]);

  return (
    <section aria-labelledby="overview-heading" className="mb-4 rounded-md border border-line bg-surface p-3">
      <h2 id="overview-heading" className="text-lg">
        At a glance
      </h2>
      <div className="mt-2 flex flex-col gap-4 lg:flex-row">
        <RankChart
          title="Integrated loudness"
          unit="LUFS"
          ranking={loudness}
          limits={loudnessLimits}
          xLabel="files, quietest to loudest"
          limitText={target ? `target ${formatLevel(target.target, "LUFS")} ± ${formatLevel(target.failToleranceLu, "LU")}` : "the profile sets no target"}
        />
        <RankChart
          title="True peak"
          unit="dBTP"
          ranking={peaks}
          limits={peakLimits}
          xLabel="files, lowest peak to highest"
          limitText={ceiling !== null ? `ceiling ${formatLevel(ceiling, "dBTP")}` : "the profile sets no ceiling"}
        />
        <div className="min-w-0 flex-1">
          <h3 className="text-sm font-semibold">Findings by code</h3>
          {bars.length === 0 ? (
            <p className="py-4 text-sm text-ink-muted">No findings in this batch.</p>
          ) : (
            <ul className="mt-1 space-y-1" aria-label="Files per finding code">
              {bars.map((bar) => (
                <li key={bar.code}>
                  <Link
                    to={bar.href}
                    className="group block rounded px-1 py-0.5 hover:bg-sunken"
                    aria-label={`${bar.code} (${bar.severity}): ${bar.files} ${bar.files === 1 ? "file" : "files"}, ${bar.findings} ${bar.findings === 1 ? "finding" : "findings"}`}
                  >
                    <span className="flex justify-between text-xs">
                      <span className="font-mono text-harbour-strong group-hover:underline">{bar.code}</span>
                      <span className="text-ink-muted">
                        {bar.files} {bar.files === 1 ? "file" : "files"} · {bar.findings}
                      </span>
                    </span>
                    <span aria-hidden="true" className="mt-0.5 block h-2 rounded-sm bg-sunken">
                      <span className={`block h-2 rounded-sm ${SEVERITY_BAR[bar.severity] ?? "bg-harbour"}`} style={{ width: `${Math.max(2, bar.percent)}%` }} />
                    </span>
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </div>
      </div>
    </section>
  );
}
