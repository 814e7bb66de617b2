/** Wording for run throughput. */
import { NOT_MEASURED } from "../../format/units.ts";

export function formatFilesPerMinute(value: number | null): string {
  if (value === null) return NOT_MEASURED;
  return `${value >= 10 ? value.toFixed(0) : value.toFixed(1)} files/min`;
}

/** Audio seconds measured per wall-clock second, as a multiple of real time. */
export function formatRealTime(value: number | null): string {
  if (value === null) return NOT_MEASURED;
  return `${value >= 10 ? value.toFixed(0) : value.toFixed(1)}× real time`;
}

/** Which rate a run's throughput is: the whole run's once finished, the recent window's while running. */
export function throughputBasisLabel(basis: "whole-run" | "recent", windowSeconds: number): string {
  return basis === "whole-run" ? "whole run" : `last ${Math.round(windowSeconds / 60)} min`;
}
