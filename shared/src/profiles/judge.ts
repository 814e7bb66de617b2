/**
 * Judges one file against a profile: re-assigns the analysers' severities, adds the findings the
 * profile's own thresholds rule on (format, true peak, loudness, DC offset) and gives the verdict.
 */
import type { AudioFormat, FileMetadata, FileMetrics, Finding, FindingCode, ReportError, Severity, Verdict } from "../types/report.ts";
import { METADATA_CODES, metadataFindings } from "../metadata/metadataRules.ts";
import { formatMismatches } from "./formatDemands.ts";
import type { Limit, Profile } from "./profileSchema.ts";

export interface JudgeInput {
  format: AudioFormat | null;
  metrics: FileMetrics | null;
  findings: Finding[];
  error: ReportError | null;
  /** Embedded metadata, judged when the profile has metadata rules. */
  metadata?: FileMetadata;
}

export interface Judgement {
  findings: Finding[];
  verdict: Verdict;
}

const SEVERITY_RANK: Record<Severity, number> = { info: 0, warn: 1, fail: 2 };

/** The severity a measured value earns against an upper limit, or null when it passes. */
export function exceededSeverity(value: number, limit: Limit): Severity | null {
  if (limit.fail !== undefined && value > limit.fail) return "fail";
  if (limit.warn !== undefined && value > limit.warn) return "warn";
  return null;
}

const fmt = (x: number, digits = 1): string => x.toFixed(digits).replace("-", "−");

function wholeFile(code: FindingCode, severity: Severity, message: string, channel: number | null = null): Finding {
  return { code, severity, channel, startSeconds: null, endSeconds: null, message };
}

function loudestTruePeakChannel(metrics: FileMetrics): number {
  let best = 0;
  for (let c = 1; c < metrics.channels.length; c++) {
    if ((metrics.channels[c].truePeakDbtp ?? -Infinity) > (metrics.channels[best].truePeakDbtp ?? -Infinity)) best = c;
  }
  return best;
}

/** Codes this profile decides itself; the analysers' own findings of these codes are replaced. */
function codesRuledByProfile(profile: Profile): Set<FindingCode> {
  const ruled = new Set<FindingCode>(["format-mismatch"]);
  if (profile.thresholds.truePeakDbtp) ruled.add("true-peak-over");
  if (profile.thresholds.samplePeakDbfs) ruled.add("near-clip");
  if (profile.thresholds.loudness) ruled.add("loudness-off-target");
  if (profile.thresholds.dcOffsetPercent) ruled.add("dc-offset");
  if (profile.metadata) for (const code of METADATA_CODES) ruled.add(code);
  return ruled;
}

function thresholdFindings(profile: Profile, metrics: FileMetrics): Finding[] {
  const out: Finding[] = [];
  const { truePeakDbtp, samplePeakDbfs, dcOffsetPercent, loudness } = profile.thresholds;

  if (truePeakDbtp && metrics.truePeakDbtp !== null) {
    const severity = exceededSeverity(metrics.truePeakDbtp, truePeakDbtp);
    if (severity) {
      const limit = severity === "fail" ? truePeakDbtp.fail : truePeakDbtp.warn;
      const channel = metrics.channels.length > 1 ? loudestTruePeakChannel(metrics) : null;
      out.push(wholeFile("true-peak-over", severity, `true peak ${fmt(metrics.truePeakDbtp)} dBTP, limit ${fmt(limit ?? 0)} dBTP`, channel));
    }
  }

  if (samplePeakDbfs && metrics.samplePeakDbfs !== null) {
    const severity = exceededSeverity(metrics.samplePeakDbfs, samplePeakDbfs);
    if (severity) {
      const limit = severity === "fail" ? samplePeakDbfs.fail : samplePeakDbfs.warn;
      out.push(wholeFile("near-clip", severity, `sample peak ${fmt(metrics.samplePeakDbfs, 2)} dBFS, limit ${fmt(limit ?? 0, 2)} dBFS`));
    }
  }

  if (dcOffsetPercent) {
    metrics.channels.forEach((ch, channel) => {
      const severity = exceededSeverity(ch.dcOffsetPercent, dcOffsetPercent);
      if (!severity) return;
      const limit = severity === "fail" ? dcOffsetPercent.fail : dcOffsetPercent.warn;
      out.push(wholeFile("dc-offset", severity, `DC offset ${fmt(ch.dcOffsetPercent, 3)} % of full scale, limit ${fmt(limit ?? 0, 3)} %`, channel));
    });
  }

  if (loudness) {
    if (metrics.integratedLufs === null) {
      out.push(wholeFile("loudness-off-target", "fail", `integrated loudness not measurable (all blocks gated out), target ${fmt(loudness.targetLufs)} LUFS`));
    } else {
      const deviationLu = metrics.integratedLufs - loudness.targetLufs;
      const severity = exceededSeverity(Math.abs(deviationLu), { warn: loudness.warnLu, fail: loudness.failLu });
      if (severity) {
        const sign = deviationLu > 0 ? "+" : "−";
        out.push(
          wholeFile(
            "loudness-off-target",
            severity,
            `integrated ${fmt(metrics.integratedLufs)} LUFS, ${sign}${Math.abs(deviationLu).toFixed(1)} LU from the ${fmt(loudness.targetLufs)} LUFS target`,
          ),
        );
      }
    }
  }
  return out;
}

/** Stable order: whole-file findings first, then by time, code and channel. */
export function compareFindings(a: Finding, b: Finding): number {
  const ta = a.startSeconds ?? -1;
  const tb = b.startSeconds ?? -1;
  if (ta !== tb) return ta - tb;
  if (a.code !== b.code) return a.code < b.code ? -1 : 1;
  return (a.channel ?? -1) - (b.channel ?? -1);
}

export function verdictOf(findings: readonly Finding[], error: ReportError | null): Verdict {
  if (error) return "error";
  let worst = -1;
  for (const f of findings) worst = Math.max(worst, SEVERITY_RANK[f.severity]);
  return worst === 2 ? "fail" : worst === 1 ? "warn" : "pass";
}

export function judge(profile: Profile, input: JudgeInput): Judgement {
  const ruled = input.error ? new Set<FindingCode>() : codesRuledByProfile(profile);
  const findings: Finding[] = [];
  for (const f of input.findings) {
    if (ruled.has(f.code)) continue;
    const override = profile.severities[f.code];
    if (override === "off") continue;
    findings.push(override ? { ...f, severity: override } : f);
  }
  if (!input.error) {
    if (input.format) {
      const severity = profile.severities["format-mismatch"];
      if (severity !== "off") findings.push(...formatMismatches(input.format, profile.format, severity ?? "fail"));
    }
    if (input.metrics) {
      // Thresholds set the severity; "off" in the severity map still silences the code.
      findings.push(...thresholdFindings(profile, input.metrics).filter((f) => profile.severities[f.code] !== "off"));
    }
    if (profile.metadata && input.metadata) {
      findings.push(...metadataFindings(profile.metadata, { format: input.format, metadata: input.metadata, metrics: input.metrics }, (code) => profile.severities[code]));
    }
  }
  findings.sort(compareFindings);
  return { findings, verdict: verdictOf(findings, input.error) };
}
