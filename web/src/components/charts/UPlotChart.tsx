/**
 * Charts load uPlot on demand (its own chunk), so the file page's pictures and controls are interactive
 * before the chart library has arrived.
 */
import { lazy, Suspense } from "react";
import type uPlot from "uplot";

export type ChartOptions = Omit<uPlot.Options, "width">;

export interface UPlotChartProps {
  options: ChartOptions;
  data: uPlot.AlignedData;
  /** Read by screen readers instead of the canvas. */
  summary: string;
  className?: string;
}

const UPlotCanvas = lazy(() => import("./UPlotCanvas.tsx"));

export function UPlotChart(props: UPlotChartProps) {
  return (
    <Suspense fallback={<p className="py-6 text-sm text-ink-muted">Drawing the chart…</p>}>
      <UPlotCanvas {...props} />
    </Suspense>
  );
}
