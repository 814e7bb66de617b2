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
 * A reviewer who reads "clipping" will go and listen (the close-ups play excerpts): this says,
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

interface HearingCautionProps {
  onConfirm: () => void;
  onCancel: () => void;
}

/**
 * Shown before the first playback of a browser session (the caller checks playbackSafety's flag): the
 * reviewer confirms before anything sounds. Focus lands on the confirm button so Enter or Space continues.
 */
export function HearingCaution({ onConfirm, onCancel }: HearingCautionProps) {
  return (
    <div
      role="alertdialog"
      aria-modal="false"
      aria-labelledby="hearing-caution-title"
      aria-describedby="hearing-caution-text"
      className="mt-2 rounded border border-warn/60 bg-warn-soft px-3 py-2 text-sm text-ink"
      onKeyDown={(e) => {
        if (e.key === "Escape") onCancel();
      }}
    >
      <p id="hearing-caution-title" className="font-semibold">
        Before you listen: lower the volume
      </p>
      <p id="hearing-caution-text" className="mt-1">
        Faulty recordings can jump in level without warning. A clipped passage, a dropout or a click can be far louder than the material around it,
        and on headphones that can hurt. Turn your speakers or headphones down first; playback starts 20 dB below the recording's own level and this page never
        raises it above that.
      </p>
      <div className="mt-2 flex gap-2">
        <button type="button" autoFocus onClick={onConfirm} className="rounded bg-harbour px-3 py-1 font-medium text-white hover:bg-harbour-strong">
          Volume is down, play
        </button>
        <button type="button" onClick={onCancel} className="rounded border border-line-strong bg-surface px-3 py-1 font-medium">
          Not now
        </button>
      </div>
    </div>
  );
}
