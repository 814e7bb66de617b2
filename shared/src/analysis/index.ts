/** Public entry points of the level-domain analysis (issue #3); each measure also has its own module. */
export { createLevelAnalyser } from "./levelAnalyser.ts";
export { createLoudnessMeter, loudnessChannelWeights, type LoudnessResult } from "./loudness.ts";
export { integratedLoudnessLufs, loudnessRangeLu, powerToLufs, lufsToPower } from "./loudnessGating.ts";
export { kWeightingShelf, kWeightingHighPass, biquadPowerGain, type Biquad } from "./kWeighting.ts";
export { createTruePeakMeter, designInterpolationFilter, truePeakOversampling, type TruePeakResult } from "./truePeak.ts";
export { amplitudeToDb, powerToDb, dbToAmplitude, dbToPower, dbOrNull } from "./decibels.ts";
export { FindingCollector, MAX_FINDINGS_PER_CODE, formatTimestamp } from "./findings.ts";
