/**
 * Tick positions and labels for the time, frequency and dB axes: round values, spaced so labels
 * never collide.
 */

export interface Tick {
  value: number;
  label: string;
}

/** Steps of a 1-2-5 series within each decade, then clock-friendly minutes and hours. */
const TIME_STEPS_SECONDS = [
  0.001, 0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800, 3600, 7200,
  10800, 21600, 43200, 86400,
];

/** "m:ss" below an hour (minutes padded to two digits: "00:30"), "h:mm:ss" from an hour; decimals for sub-second steps. */
export function formatClock(seconds: number, durationSeconds: number, stepSeconds: number): string {
  const decimals = stepSeconds >= 1 ? 0 : Math.min(3, Math.ceil(-Math.log10(stepSeconds) - 1e-9));
  const scale = 10 ** decimals;
  const totalUnits = Math.round(seconds * scale);
  const whole = Math.floor(totalUnits / scale);
  const fraction = totalUnits - whole * scale;
  const h = Math.floor(whole / 3600);
  const m = Math.floor((whole % 3600) / 60);
  const s = whole % 60;
  const ss = String(s).padStart(2, "0") + (decimals > 0 ? `.${String(fraction).padStart(decimals, "0")}` : "");
  if (durationSeconds >= 3600) return `${h}:${String(m).padStart(2, "0")}:${ss}`;
  return `${String(m).padStart(2, "0")}:${ss}`;
}

/** Time ticks from 0 to the duration with labels at least minSpacingPx apart on a plotWidthPx axis. */
export function timeTicks(durationSeconds: number, plotWidthPx: number, minSpacingPx: number): { step: number; ticks: Tick[] } {
  if (!(durationSeconds > 0)) return { step: 0, ticks: [{ value: 0, label: formatClock(0, 0, 1) }] };
  const pxPerSecond = plotWidthPx / durationSeconds;
  const step = TIME_STEPS_SECONDS.find((s) => s * pxPerSecond >= minSpacingPx) ?? TIME_STEPS_SECONDS[TIME_STEPS_SECONDS.length - 1];
  const ticks: Tick[] = [];
  for (let i = 0; i * step <= durationSeconds + 1e-9; i++) {
    const value = i * step;
    ticks.push({ value, label: formatClock(value, durationSeconds, step) });
  }
  return { step, ticks };
}

/** "500", "1k", "2.5k", "12.5k", "100k". */
export function formatHz(hz: number): string {
  if (hz < 1000) return String(Number(hz.toPrecision(3)));
  return `${Number((hz / 1000).toPrecision(3))}k`;
}

/**
 * Frequency ticks for a log axis: 1-2-5 per decade, thinned to 1-… or 1-2-… when decades are short,
 * keeping labels at least minSpacingPx apart (`pxOf` maps Hz to a pixel offset along the axis).
 */
export function logFrequencyTicks(minHz: number, maxHz: number, pxOf: (hz: number) => number, minSpacingPx: number): Tick[] {
  for (const mantissas of [[1, 2, 5], [1, 2], [1], [1]]) {
    const ticks: Tick[] = [];
    for (let decade = 10 ** Math.floor(Math.log10(minHz)); decade <= maxHz; decade *= 10) {
      for (const m of mantissas) {
        const hz = m * decade;
        if (hz >= minHz * 1.0001 && hz <= maxHz) ticks.push({ value: hz, label: formatHz(hz) });
      }
    }
    if (mantissas.length === 1 || hasRoom(ticks, pxOf, minSpacingPx)) return ticks;
  }
  return [];
}

/** Frequency ticks for a linear axis at a 1-2-5 step giving at least minSpacingPx between labels. */
export function linearFrequencyTicks(maxHz: number, pxOf: (hz: number) => number, minSpacingPx: number): Tick[] {
  const pxPerHz = Math.abs(pxOf(maxHz) - pxOf(0)) / maxHz;
  let step = 1;
  for (let decade = 1; decade < 1e7; decade *= 10) {
    const found = [1, 2, 5].map((m) => m * decade).find((s) => s * pxPerHz >= minSpacingPx);
    if (found !== undefined) {
      step = found;
      break;
    }
  }
  const ticks: Tick[] = [];
  for (let hz = 0; hz <= maxHz + 1e-9; hz += step) ticks.push({ value: hz, label: formatHz(hz) });
  return ticks;
}

function hasRoom(ticks: Tick[], pxOf: (hz: number) => number, minSpacingPx: number): boolean {
  for (let i = 1; i < ticks.length; i++) if (Math.abs(pxOf(ticks[i].value) - pxOf(ticks[i - 1].value)) < minSpacingPx) return false;
  return true;
}

/** dB scale ticks every stepDb from maxDb down to minDb ("0", "-20", …). */
export function dbTicks(minDb: number, maxDb: number, stepDb: number): Tick[] {
  const ticks: Tick[] = [];
  for (let db = Math.floor(maxDb / stepDb) * stepDb; db >= minDb - 1e-9; db -= stepDb) {
    ticks.push({ value: db, label: db === 0 ? "0" : String(db) });
  }
  return ticks;
}
