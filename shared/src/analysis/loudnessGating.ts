/**
 * Gated loudness from block powers. Block power z = Σ_i G_i · mean(y_i²) over the block's K-weighted
 * samples; loudness l = −0.691 + 10·log10(z) (ITU-R BS.1770-4, Annex 1, eq. 2).
 */

/** −0.691 dB makes a 997 Hz full-scale sine in one front channel read −3.01 LKFS (BS.1770-4, Annex 1). */
export const LOUDNESS_OFFSET_DB = -0.691;
/** Absolute gate Γa = −70 LKFS (BS.1770-4, Annex 1, eq. 5; EBU Tech 3342 for LRA). */
export const ABSOLUTE_GATE_LUFS = -70;
/** Relative gate 10 LU below the absolute-gated level (BS.1770-4, Annex 1, eq. 6). */
export const INTEGRATED_RELATIVE_GATE_LU = -10;
/** Relative gate 20 LU below, for loudness range (EBU Tech 3342, section 3). */
export const RANGE_RELATIVE_GATE_LU = -20;
/** Loudness range spans the 10th to the 95th percentile of the gated short-term loudness (EBU Tech 3342). */
export const RANGE_LOW_PERCENTILE = 0.1;
export const RANGE_HIGH_PERCENTILE = 0.95;

export function powerToLufs(power: number): number {
  return power > 0 ? LOUDNESS_OFFSET_DB + 10 * Math.log10(power) : -Infinity;
}

export function lufsToPower(lufs: number): number {
  return 10 ** ((lufs - LOUDNESS_OFFSET_DB) / 10);
}

/** Mean power of the blocks above `thresholdPower` (strictly, as "l_j > Γ" in BS.1770-4), or 0. */
function gatedMeanPower(powers: Float64Array, thresholdPower: number): number {
  let sum = 0;
  let n = 0;
  for (let i = 0; i < powers.length; i++) {
    if (powers[i] > thresholdPower) {
      sum += powers[i];
      n++;
    }
  }
  return n > 0 ? sum / n : 0;
}

/**
 * Integrated loudness from the powers of the 400 ms gating blocks (75 % overlap), BS.1770-4 Annex 1:
 * mean over blocks above the absolute gate, then over blocks above both gates. −Infinity when none pass.
 */
export function integratedLoudnessLufs(blockPowers: Float64Array): number {
  const absolute = lufsToPower(ABSOLUTE_GATE_LUFS);
  const ungated = gatedMeanPower(blockPowers, absolute);
  if (ungated === 0) return -Infinity;
  const relative = lufsToPower(powerToLufs(ungated) + INTEGRATED_RELATIVE_GATE_LU);
  return powerToLufs(gatedMeanPower(blockPowers, Math.max(absolute, relative)));
}

/**
 * Loudness range (LU) from the powers of 3 s short-term blocks, EBU Tech 3342: absolute gate −70 LUFS,
 * relative gate −20 LU below their power mean, then the 95th minus the 10th percentile of what is left
 * (nearest rank on the sorted values, common practice). Null when no block passes the gates.
 */
export function loudnessRangeLu(shortTermPowers: Float64Array): number | null {
  const absolute = lufsToPower(ABSOLUTE_GATE_LUFS);
  const mean = gatedMeanPower(shortTermPowers, absolute);
  if (mean === 0) return null;
  const threshold = Math.max(absolute, lufsToPower(powerToLufs(mean) + RANGE_RELATIVE_GATE_LU));
  const kept: number[] = [];
  for (let i = 0; i < shortTermPowers.length; i++) if (shortTermPowers[i] > threshold) kept.push(shortTermPowers[i]);
  const sorted = Float64Array.from(kept).sort();
  const at = (p: number) => sorted[Math.min(sorted.length - 1, Math.round((sorted.length - 1) * p))];
  return Math.max(0, powerToLufs(at(RANGE_HIGH_PERCENTILE)) - powerToLufs(at(RANGE_LOW_PERCENTILE)));
}
