import type { FindingSummaryDto, ReviewState } from "@tidemark/shared/types/api";
import type { Severity, Verdict } from "@tidemark/shared/types/report";
import { ErrorIcon, FailIcon, PassIcon, WarnIcon } from "./icons.tsx";

const VERDICT_STYLE: Record<Verdict, { className: string; label: string; Icon: typeof PassIcon }> = {
  pass: { className: "bg-pass-soft text-pass", label: "pass", Icon: PassIcon },
  warn: { className: "bg-warn-soft text-warn", label: "warn", Icon: WarnIcon },
  fail: { className: "bg-fail-soft text-fail", label: "fail", Icon: FailIcon },
  error: { className: "bg-error-soft text-error", label: "error", Icon: ErrorIcon },
};

/** Verdicts: filled pill with an icon, so colour is never the only cue. */
export function VerdictBadge({ verdict }: { verdict: Verdict }) {
  const { className, label, Icon } = VERDICT_STYLE[verdict];
  return (
    <span className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-xs font-semibold uppercase tracking-wide ${className}`}>
      <Icon width={12} height={12} />
      {label}
    </span>
  );
}

const REVIEW_STYLE: Record<ReviewState, string> = {
  pending: "border-pending/50 text-pending bg-pending-soft",
  accepted: "border-accepted/50 text-accepted bg-accepted-soft",
  flagged: "border-flagged/60 text-flagged bg-flagged-soft",
  retransfer: "border-retransfer/50 text-retransfer bg-retransfer-soft",
};

/** Review states: outlined square-ish tag, visibly different from verdict pills. */
export function ReviewStateBadge({ state }: { state: ReviewState }) {
  return <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium ${REVIEW_STYLE[state]}`}>{state}</span>;
}

const SEVERITY_STYLE: Record<Severity, string> = {
  info: "bg-harbour-soft text-harbour-strong",
  warn: "bg-warn-soft text-warn",
  fail: "bg-fail-soft text-fail",
};

export function SeverityBadge({ severity }: { severity: Severity }) {
  return <span className={`inline-block rounded px-1.5 py-0.5 text-xs font-semibold ${SEVERITY_STYLE[severity]}`}>{severity}</span>;
}

export function FindingChips({ findings, max = 3 }: { findings: FindingSummaryDto[]; max?: number }) {
  if (findings.length === 0) return <span className="text-ink-muted">none</span>;
  const shown = findings.slice(0, max);
  const hidden = findings.length - shown.length;
  return (
    <span className="flex flex-wrap gap-1">
      {shown.map((f) => (
        <span key={f.code} className={`rounded px-1.5 whitespace-nowrap py-0.5 font-mono text-xs ${SEVERITY_STYLE[f.severity]}`} title={`${f.severity}: ${f.code} × ${f.count}`}>
          {f.code}
          {f.count > 1 && <span aria-label={`${f.count} times`}> ×{f.count}</span>}
        </span>
      ))}
      {hidden > 0 && <span className="text-xs whitespace-nowrap text-ink-muted">+{hidden} more</span>}
    </span>
  );
}
