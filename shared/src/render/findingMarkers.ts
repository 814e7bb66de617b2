/**
 * Finding ticks along the top edge of a plot: a small downward wedge at each finding's start, and a bar
 * along the edge for its extent when it lasts long enough to see. Worse severities are drawn last, so
 * they stay on top where findings crowd together.
 */
import type { Finding, Severity } from "../types/report.ts";
import { plotXOfSeconds, type PlotArea } from "./layout.ts";
import { fillRect, type Rgb } from "./raster.ts";
import type { RgbaImage } from "../types/analysis.ts";

/** Our severity palette: distinct in hue and in lightness (so it survives greyscale printing). */
export const SEVERITY_COLOURS: Record<Severity, Rgb> = {
  info: [110, 176, 255],
  warn: [255, 190, 60],
  fail: [255, 72, 88],
};

const DRAW_ORDER: Severity[] = ["info", "warn", "fail"];

export function drawFindingMarkers(
  image: RgbaImage,
  plot: PlotArea,
  durationSeconds: number,
  markers: readonly Finding[],
  wedgeHeightPx: number,
): void {
  if (!(durationSeconds > 0)) return;
  const xOf = (seconds: number): number => plotXOfSeconds(plot, durationSeconds, seconds);
  for (const severity of DRAW_ORDER) {
    const colour = SEVERITY_COLOURS[severity];
    for (const f of markers) {
      if (f.severity !== severity || f.startSeconds === null) continue;
      const x = Math.round(xOf(f.startSeconds));
      if (f.endSeconds !== null && xOf(f.endSeconds) - xOf(f.startSeconds) >= 3) {
        fillRect(image, x, plot.top - 3, Math.round(xOf(f.endSeconds)) - x + 1, 3, colour);
      }
      // Wedge: widest at its top, one pixel at the plot's edge.
      for (let row = 0; row < wedgeHeightPx; row++) {
        const half = Math.floor(((wedgeHeightPx - 1 - row) * 4) / Math.max(1, wedgeHeightPx - 1));
        fillRect(image, x - half, plot.top - wedgeHeightPx + row, 2 * half + 1, 1, colour);
      }
    }
  }
}
