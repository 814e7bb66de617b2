/**
 * How close-up candidates rank (shared/src/closeups/closeupCapture.ts): by the severity the profile will
 * give their code, 0 when it turns the code off. Its own module so the second thread
 * (spectralThread.ts) can rank alike from the profile's severities without loading the rest of a scan.
 */
import type { ProfileSeverity } from "@tidemark/shared/profiles/profileSchema";
import type { FindingCode, Severity } from "@tidemark/shared/types/report";

export type SeverityOverrides = Partial<Record<FindingCode, ProfileSeverity>>;

export function rankerFor(severities: SeverityOverrides): (code: FindingCode, severity: Severity) => number {
  const rank: Record<ProfileSeverity, number> = { off: 0, info: 1, warn: 2, fail: 3 };
  return (code, severity) => rank[severities[code] ?? severity];
}
