/**
 * Listening safely: the gain only ever attenuates (at most unity, starting 20 dB down), and the hearing
 * caution is shown before the first playback of a browser session.
 */

/** The gain control's range in dB relative to unity; 0 dB is the ceiling, never a boost. */
export const GAIN_MIN_DB = -60;
export const GAIN_MAX_DB = 0;
/** Where every close-up starts: 20 dB below unity (issue #16). */
export const GAIN_START_DB = -20;

/** Linear gain for a setting in dB, clamped to [GAIN_MIN_DB, 0 dB] so no input can boost above unity. */
export function gainDbToLinear(db: number): number {
  if (!Number.isFinite(db)) return 10 ** (GAIN_START_DB / 20);
  const clamped = Math.min(GAIN_MAX_DB, Math.max(GAIN_MIN_DB, db));
  return Math.min(1, 10 ** (clamped / 20));
}

export function clampGainDb(db: number): number {
  if (!Number.isFinite(db)) return GAIN_START_DB;
  return Math.min(GAIN_MAX_DB, Math.max(GAIN_MIN_DB, db));
}

const CAUTION_KEY = "tidemark.hearingCautionSeen";

/** True once the reviewer has confirmed the caution in this tab's session. */
export function hasSeenHearingCaution(): boolean {
  try {
    return window.sessionStorage.getItem(CAUTION_KEY) === "1";
  } catch {
    // Storage can be blocked (private modes, policies): then the caution shows every time, which is safe.
    return false;
  }
}

export function markHearingCautionSeen(): void {
  try {
    window.sessionStorage.setItem(CAUTION_KEY, "1");
  } catch {
    // See above: without storage the caution simply comes back.
  }
}
