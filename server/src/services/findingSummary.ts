/** The list's "worst findings" column, computed once at ingest. */
import type { FindingSummaryDto } from "@tidemark/shared/types/api";
import type { Finding, Severity } from "@tidemark/shared/types/report";

const SEVERITY_RANK: Record<Severity, number> = { info: 0, warn: 1, fail: 2 };

/** One entry per code with its most severe severity and its count; most severe first, then most frequent. */
export function summariseFindings(findings: readonly Pick<Finding, "code" | "severity">[]): FindingSummaryDto[] {
  const byCode = new Map<string, FindingSummaryDto>();
  for (const f of findings) {
    const entry = byCode.get(f.code);
    if (!entry) byCode.set(f.code, { code: f.code, severity: f.severity, count: 1 });
    else {
      entry.count++;
      if (SEVERITY_RANK[f.severity] > SEVERITY_RANK[entry.severity]) entry.severity = f.severity;
    }
  }
  return [...byCode.values()].sort(
    (a, b) => SEVERITY_RANK[b.severity] - SEVERITY_RANK[a.severity] || b.count - a.count || a.code.localeCompare(b.code),
  );
}
