/**
 * Which channel of a multichannel stream is the LFE. WAVE_FORMAT_EXTENSIBLE files say so in their speaker
 * mask: channels feed the set bits in ascending order, and SPEAKER_LOW_FREQUENCY is bit 0x8 (Microsoft's
 * KSAUDIO_SPEAKER definitions, from memory). Without a mask, six and eight channels are taken as 5.1 and
 * 7.1 in the WAVE default order (L R C LFE …), so the LFE is the fourth channel.
 */

/** SPEAKER_LOW_FREQUENCY in the WAVE_FORMAT_EXTENSIBLE channel mask. */
export const SPEAKER_LFE = 0x8;

/** 0-based index of the LFE channel, or null when the stream has none. */
export function lfeChannelIndex(channels: number, channelMask?: number | null): number | null {
  if (channelMask !== undefined && channelMask !== null && channelMask !== 0) {
    if ((channelMask & SPEAKER_LFE) === 0) return null;
    // Channels before the LFE are the set bits below it.
    let before = 0;
    for (let bit = 1; bit < SPEAKER_LFE; bit *= 2) if ((channelMask & bit) !== 0) before++;
    return before < channels ? before : null;
  }
  return channels === 6 || channels === 8 ? 3 : null;
}
