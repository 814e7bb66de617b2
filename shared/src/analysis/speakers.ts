/**
 * Which speaker each channel of a stream feeds: the one channel-layout rule that loudness (its BS.1770-4
 * weights) and silence (which channel is the LFE, left out of the dead-channel check) both follow.
 *
 * WAVE_FORMAT_EXTENSIBLE files say so in their speaker mask: channels feed the set bits in ascending order
 * (Microsoft's multichannel WAVE note and KSAUDIO_SPEAKER definitions, from memory: FL 0x1, FR 0x2, FC 0x4,
 * LFE 0x8, BL 0x10, BR 0x20, FLC 0x40, FRC 0x80, BC 0x100, SL 0x200, SR 0x400, …); channels beyond its bits
 * feed none. Without a mask (plain WAVE_FORMAT_PCM, a mask of 0, AIFF) the counts whose layout is settled in
 * practice take it, in the same order: five channels 5.0 (L R C Ls Rs), six 5.1 (L R C LFE Ls Rs), eight
 * 7.1 (L R C LFE Lb Rb Ls Rs), the masks RFC 9639 (9.1.3) also fixes for FLAC; other counts (often separate
 * tracks) feed no speaker: every channel weighs 1.0 and none is the LFE.
 */

/** SPEAKER_LOW_FREQUENCY in the WAVE_FORMAT_EXTENSIBLE channel mask. */
export const SPEAKER_LFE = 0x8;
/** Back left/right, side left/right: the surrounds of 5.1 and 7.1 files, flagged either way in practice. */
export const SPEAKER_SURROUNDS = 0x10 | 0x20 | 0x200 | 0x400;

/** The layout a stream without a speaker mask is taken to have (common practice; the same masks as RFC 9639, 9.1.3). */
export const DEFAULT_CHANNEL_MASKS: Readonly<Record<number, number>> = { 5: 0x37, 6: 0x3f, 8: 0x63f };

/** The speaker bit each channel feeds (0: none), from the mask, else the default layout for the channel count. */
export function channelSpeakers(channels: number, channelMask?: number | null): number[] {
  const given = channelMask !== undefined && channelMask !== null && channelMask !== 0;
  const mask = given ? channelMask >>> 0 : (DEFAULT_CHANNEL_MASKS[channels] ?? 0);
  const speakers = new Array<number>(channels).fill(0);
  let c = 0;
  for (let bit = 1; bit <= 0x80000000 && c < channels; bit *= 2) if ((mask & bit) !== 0) speakers[c++] = bit;
  return speakers;
}

/** 0-based index of the LFE channel, or null when the stream has none. */
export function lfeChannelIndex(channels: number, channelMask?: number | null): number | null {
  const at = channelSpeakers(channels, channelMask).indexOf(SPEAKER_LFE);
  return at < 0 ? null : at;
}

/**
 * Channel weights G_i of ITU-R BS.1770-4, Annex 1, Table 3: surrounds 1.41, LFE excluded (0), every other
 * channel, and one that feeds no known speaker, 1.0.
 */
export function loudnessChannelWeights(channels: number, channelMask?: number | null): Float64Array {
  const weights = new Float64Array(channels);
  channelSpeakers(channels, channelMask).forEach((speaker, c) => {
    weights[c] = speaker === SPEAKER_LFE ? 0 : (speaker & SPEAKER_SURROUNDS) !== 0 ? 1.41 : 1;
  });
  return weights;
}
