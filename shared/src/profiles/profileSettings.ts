/** The analysis settings a profile asks for: its overrides merged over DEFAULT_ANALYSIS_SETTINGS. */
import { DEFAULT_ANALYSIS_SETTINGS, type AnalysisSettings } from "../types/settings.ts";
import type { Profile } from "./profileSchema.ts";

/** Drops undefined values so an absent override never masks a default. */
function definedOnly<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

export function resolveAnalysisSettings(profile: Profile, base: AnalysisSettings = DEFAULT_ANALYSIS_SETTINGS): AnalysisSettings {
  const { spectrogram, ...flat } = profile.settings;
  return {
    ...base,
    ...definedOnly(flat),
    spectrogram: { ...base.spectrogram, ...definedOnly(spectrogram ?? {}) },
  };
}
