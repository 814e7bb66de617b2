/**
 * Bounded finding lists: a pathological file (a clipped sine has a clip run every half cycle) must not
 * grow the report without limit. The first MAX_FINDINGS_PER_CODE findings of each code are kept; the
 * rest are counted and summarised in one closing finding of the same code.
 */
import type { Finding, FindingCode, Severity } from "../types/report.ts";

export const MAX_FINDINGS_PER_CODE = 50;

interface Overflow {
  count: number;
  severity: Severity;
  firstSeconds: number | null;
  lastSeconds: number | null;
}

export class FindingCollector {
  private readonly kept: Finding[] = [];
  private readonly perCode = new Map<FindingCode, number>();
  private readonly overflow = new Map<FindingCode, Overflow>();

  constructor(private readonly limitPerCode = MAX_FINDINGS_PER_CODE) {}

  add(finding: Finding): void {
    const count = this.perCode.get(finding.code) ?? 0;
    this.perCode.set(finding.code, count + 1);
    if (count < this.limitPerCode) {
      this.kept.push(finding);
      return;
    }
    const o = this.overflow.get(finding.code) ?? { count: 0, severity: finding.severity, firstSeconds: null, lastSeconds: null };
    o.count++;
    o.firstSeconds ??= finding.startSeconds;
    o.lastSeconds = finding.endSeconds ?? finding.startSeconds ?? o.lastSeconds;
    this.overflow.set(finding.code, o);
  }

  /** How many findings of a code were added, kept or not. */
  countOf(code: FindingCode): number {
    return this.perCode.get(code) ?? 0;
  }

  finish(): Finding[] {
    const out = this.kept.slice();
    for (const [code, o] of this.overflow) {
      const span = o.firstSeconds !== null ? ` between ${formatTimestamp(o.firstSeconds)} and ${formatTimestamp(o.lastSeconds ?? o.firstSeconds)}` : "";
      out.push({
        code,
        severity: o.severity,
        channel: null,
        startSeconds: o.firstSeconds,
        endSeconds: o.lastSeconds,
        message: `${o.count} more ${code} finding(s)${span} not listed (first ${this.limitPerCode} shown)`,
      });
    }
    return out;
  }
}

/** Seconds as m:ss.mmm or h:mm:ss.mmm (position in the file for messages). */
export function formatTimestamp(seconds: number): string {
  const totalMs = Math.round(Math.max(0, seconds) * 1000);
  const ms = totalMs % 1000;
  const totalS = Math.floor(totalMs / 1000);
  const s = totalS % 60;
  const m = Math.floor(totalS / 60) % 60;
  const h = Math.floor(totalS / 3600);
  const tail = `${String(s).padStart(2, "0")}.${String(ms).padStart(3, "0")}`;
  return h > 0 ? `${h}:${String(m).padStart(2, "0")}:${tail}` : `${m}:${tail}`;
}

/** 1-based channel name for messages ("channel 2"); findings carry the 0-based index. */
export function channelLabel(channel: number): string {
  return `channel ${channel + 1}`;
}
