import type { FindingDto } from "@tidemark/shared/types/api";

/** Findings that mean a transfer can play back at full scale or with sudden clicks. */
const LOUD_OR_SHARP: Record<string, string> = {
  clipping: "clipping",
  "near-clip": "peaks near full scale",
  "true-peak-over": "true peaks over the limit",
  dropout: "dropouts (sudden clicks)",
  "dc-offset": "a DC offset (a thump at start and end)",
};

/**
 * The portal plays no audio, but a reviewer who reads "clipping" will often go and listen: this says,
 * where it matters, to start with the volume low (common practice around loud or damaged material).
 */
export function ListeningCaution({ findings }: { findings: FindingDto[] }) {
  const reasons = [...new Set(findings.map((f) => LOUD_OR_SHARP[f.code]).filter((r): r is string => r !== undefined))];
  if (reasons.length === 0) return null;
  return (
    <p role="note" className="mb-3 rounded border border-warn/40 bg-warn-soft px-3 py-2 text-sm">
      <strong>Listening to this file?</strong> Turn the volume down before you press play: it has {reasons.join(", ")}, and can be
      very loud or click sharply, especially on headphones.
    </p>
  );
}
