import type { ScanRunCountsDto } from "@tidemark/shared/types/api";

const SEGMENTS = [
  { key: "done", label: "done", className: "bg-pass" },
  { key: "failed", label: "failed", className: "bg-fail" },
  { key: "active", label: "being scanned", className: "bg-harbour" },
] as const;

/**
 * Done, failed and active shares of a run's jobs; the rest is queued. A progressbar for assistive
 * technology, with every count in its label.
 */
export function RunProgressBar({ counts, className = "" }: { counts: ScanRunCountsDto; className?: string }) {
  const total = Math.max(1, counts.total);
  const finished = counts.done + counts.failed;
  const label = `${finished} of ${counts.total} finished: ${counts.done} done, ${counts.failed} failed, ${counts.active} being scanned, ${counts.queued} queued`;
  return (
    <div
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={counts.total}
      aria-valuenow={finished}
      title={label}
      className={`flex h-2.5 w-full overflow-hidden rounded-full bg-sunken ${className}`}
    >
      {SEGMENTS.map((s) => (counts[s.key] > 0 ? <span key={s.key} className={s.className} style={{ width: `${(counts[s.key] / total) * 100}%` }} /> : null))}
    </div>
  );
}
