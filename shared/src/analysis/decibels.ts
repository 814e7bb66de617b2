/** Level conversions. Quiet is −Infinity in computation and null in reports (report contract). */

export function amplitudeToDb(amplitude: number): number {
  return amplitude > 0 ? 20 * Math.log10(amplitude) : -Infinity;
}

export function powerToDb(power: number): number {
  return power > 0 ? 10 * Math.log10(power) : -Infinity;
}

export function dbToAmplitude(db: number): number {
  return 10 ** (db / 20);
}

export function dbToPower(db: number): number {
  return 10 ** (db / 10);
}

/** −Infinity (and NaN) become null, as the report contract writes quiet values. */
export function dbOrNull(db: number): number | null {
  return Number.isFinite(db) ? db : null;
}

/** "−12.3 dBFS"-style text for messages; "−∞" for silence. */
export function formatDb(db: number, digits = 1): string {
  return Number.isFinite(db) ? db.toFixed(digits) : "−∞";
}
