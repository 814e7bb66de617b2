/**
 * Shaping GET /api/batches/:id/overview for the at-a-glance strip: files ranked by a measure (a sorted
 * dot plot, so outliers sit at the ends) and finding counts as bars. Pure, tested without a canvas.
 */
import type { BatchOverviewDto } from "@tidemark/shared/types/api";
import { filesLink } from "../files/fileQueryParams.ts";

type OverviewFile = BatchOverviewDto["files"][number];

export interface RankedMeasure {
  /** Ranks 1…n, then the values in ascending order: uPlot's aligned data. */
  ranks: number[];
  values: number[];
  files: OverviewFile[];
  /** Files whose value lies outside the limits (above the ceiling, or outside target ± fail tolerance). */
  outside: number;
  /** Files without a value (unreadable, silent). */
  missing: number;
}

export function rankBy(files: OverviewFile[], pick: (f: OverviewFile) => number | null, isOutside: (value: number) => boolean): RankedMeasure {
  const measured = files.filter((f) => pick(f) !== null).sort((a, b) => (pick(a) as number) - (pick(b) as number));
  const values = measured.map((f) => pick(f) as number);
  return {
    ranks: values.map((_, i) => i + 1),
    values,
    files: measured,
    outside: values.filter(isOutside).length,
    missing: files.length - measured.length,
  };
}

export function loudnessRanking(overview: BatchOverviewDto): RankedMeasure {
  const l = overview.profileLimits?.integratedLufs ?? null;
  return rankBy(overview.files, (f) => f.integratedLufs, (v) => l !== null && Math.abs(v - l.target) > l.failToleranceLu);
}

export function truePeakRanking(overview: BatchOverviewDto): RankedMeasure {
  const max = overview.profileLimits?.truePeakMaxDbtp ?? null;
  return rankBy(overview.files, (f) => f.truePeakDbtp, (v) => max !== null && v > max);
}

export interface FindingBar {
  code: string;
  severity: BatchOverviewDto["findingCounts"][number]["severity"];
  files: number;
  findings: number;
  /** Bar length in percent of the longest (by files affected). */
  percent: number;
  href: string;
}

const SEVERITY_ORDER = { fail: 0, warn: 1, info: 2 } as const;

/** Most severe first, then most files affected; each links to the Files list filtered to batch and code. */
export function findingBars(overview: BatchOverviewDto): FindingBar[] {
  const most = Math.max(1, ...overview.findingCounts.map((c) => c.files));
  return [...overview.findingCounts]
    .sort((a, b) => SEVERITY_ORDER[a.severity] - SEVERITY_ORDER[b.severity] || b.files - a.files || a.code.localeCompare(b.code))
    .map((c) => ({
      ...c,
      percent: (c.files / most) * 100,
      href: filesLink({ batch: overview.batchId, finding: c.code }),
    }));
}
