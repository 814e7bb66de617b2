/**
 * The one wrapper around uPlot: the chart is created when the element mounts, rebuilt when its options or
 * data change, resized with its container and destroyed on unmount. Charts describe themselves in
 * `summary` text as well, since a canvas says nothing to a screen reader.
 */
import { useEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { UPlotChartProps } from "./UPlotChart.tsx";

export default function UPlotCanvas({ options, data, summary, className }: UPlotChartProps) {
  const container = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const element = container.current;
    if (!element) return;
    const width = Math.max(240, Math.floor(element.clientWidth || 640));
    const chart = new uPlot({ ...options, width }, data, element);
    const observer = typeof ResizeObserver === "function" ? new ResizeObserver(() => chart.setSize({ width: Math.max(240, Math.floor(element.clientWidth)), height: options.height })) : null;
    observer?.observe(element);
    return () => {
      observer?.disconnect();
      chart.destroy();
    };
  }, [options, data]);
  return (
    <figure className={className}>
      <div ref={container} aria-hidden="true" />
      <figcaption className="sr-only">{summary}</figcaption>
    </figure>
  );
}
