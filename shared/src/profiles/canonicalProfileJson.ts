/**
 * A canonical text of a profile (keys sorted, no whitespace, `$schema` left out) so that two files
 * meaning the same profile hash the same. The CLI hashes it with SHA-256 for `report.profile.hash`.
 */
import type { Profile } from "./profileSchema.ts";

function canonical(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(canonical);
  if (value !== null && typeof value === "object") {
    const out: Record<string, unknown> = {};
    for (const key of Object.keys(value).sort()) {
      const v = (value as Record<string, unknown>)[key];
      if (v !== undefined) out[key] = canonical(v);
    }
    return out;
  }
  return value;
}

export function canonicalProfileJson(profile: Profile): string {
  const { $schema: _ignored, ...content } = profile;
  return JSON.stringify(canonical(content));
}
