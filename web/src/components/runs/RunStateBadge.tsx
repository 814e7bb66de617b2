import type { ScanRunState } from "@tidemark/shared/types/api";

const STYLE: Record<ScanRunState, { className: string; label: string }> = {
  waiting: { className: "border-pending/50 bg-pending-soft text-pending", label: "waiting" },
  running: { className: "border-harbour/50 bg-harbour-soft text-harbour-strong", label: "running" },
  done: { className: "border-pass/50 bg-pass-soft text-pass", label: "done" },
  failed: { className: "border-fail/50 bg-fail-soft text-fail", label: "done, with failed jobs" },
};

/** A run's state in words (never colour alone). */
export function RunStateBadge({ state }: { state: ScanRunState }) {
  const { className, label } = STYLE[state];
  return <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium whitespace-nowrap ${className}`}>{label}</span>;
}
