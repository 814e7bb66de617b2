/** The analysis settings a profile asks for: its overrides merged over DEFAULT_ANALYSIS_SETTINGS. */
import { DEFAULT_ANALYSIS_SETTINGS, type AnalysisSettings } from "../types/settings.ts";
import type { ProfileLimits } from "../types/report.ts";
import type { Profile } from "./profileSchema.ts";

/** Drops undefined values so an absent override never masks a default. */
function definedOnly<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

export function resolveAnalysisSettings(profile: Profile, base: AnalysisSettings = DEFAULT_ANALYSIS_SETTINGS): AnalysisSettings {
  const { spectrogram, closeups, ...flat } = profile.settings;
  return {
    ...base,
    ...definedOnly(flat),
    spectrogram: { ...base.spectrogram, ...definedOnly(spectrogram ?? {}) },
    closeups: { ...base.closeups, ...definedOnly(closeups ?? {}) },
  };
}

/** The profile's loudness and true-peak limits as the report states them (null where it sets none). */
export function profileLimits(profile: Profile): ProfileLimits {
  const { loudness, truePeakDbtp } = profile.thresholds;
  // A profile giving only one tolerance has no band between warn and fail: both read the same.
  const warn = loudness?.warnLu ?? loudness?.failLu;
  const fail = loudness?.failLu ?? loudness?.warnLu;
  return {
    integratedLufs: loudness && warn !== undefined && fail !== undefined ? { target: loudness.targetLufs, warnToleranceLu: warn, failToleranceLu: fail } : null,
    truePeakMaxDbtp: truePeakDbtp?.fail ?? truePeakDbtp?.warn ?? null,
  };
}
