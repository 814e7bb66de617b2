/**
 * Keeps the samples close-ups are cut from, in the one streaming pass (issue #16). Findings are only
 * final at the end of the pass, so the audio around them must be kept before anyone knows which will be
 * shown. Bounded look-back, in two parts:
 *
 * - a ring of the last `lookBack` seconds (the window before an event plus the time a detector takes to
 *   recognise it: a dropout is known when it ends, a silence once it has lasted silenceMinSeconds);
 * - captured segments: when a detector raises a candidate (a finding as it is emitted during the pass, a
 *   silent run once long enough, a new loudest sample above the near-clip threshold, read from the level
 *   analyser's 50 ms windows, so the capture adds no per-sample work but one copy), the window around
 *   it is copied out of the ring and then extended block by block up to the window's end. Candidates
 *   whose windows overlap share one segment.
 *
 * Memory: the ring and the segments are each held to the file's budget (`budgetBytes`, Float32 samples),
 * so the capture never holds more than twice the budget. When a segment would cross it, lower-ranked
 * segments (rank = the profile's severity of the candidate's code; among equals the latest) are dropped
 * first; a candidate that outranks none is not kept, and a growing segment that cannot grow stops
 * there. At the end the ring's contents are one more segment, so events near the end of the file (a
 * truncation, a trailing silence) are covered too. Which captured windows become close-ups is decided at
 * the end, from the judged findings (closeupSelection.ts).
 */
import type { AudioBlock } from "../types/analysis.ts";
import type { CloseupSettings } from "../types/settings.ts";

/** Detectors' recognition delay covered by the ring beyond the window's pre-roll, s (common practice: a dropout or a clip region closes within this). */
const RECOGNITION_LAG_SECONDS = 3;
const BYTES_PER_SAMPLE = 4;

export interface CapturedSegment {
  startFrame: number;
  /** Planar samples, one array a channel, all of equal length. */
  channels: Float32Array[];
}

export interface CloseupCapture {
  /** Feed each block before the analysers that raise candidates see it. */
  push(block: AudioBlock): void;
  /** The frames [startFrame, endFrame] hold an event of this rank (> 0) that may become a finding. */
  candidate(startFrame: number, endFrame: number, rank: number): void;
  /** A channel's loudest |sample| in a stretch just pushed, and its frame (the level analyser's windows). */
  peak(channel: number, amplitude: number, frame: number): void;
  finish(): CapturedSegment[];
  /** Bytes of samples held now (ring plus segments). */
  readonly heldBytes: number;
}

interface Segment {
  start: number;
  end: number;
  wantedEnd: number;
  rank: number;
  chunks: Float32Array[][];
  /** Set when this segment holds only a peak candidate of this channel (superseded by a louder one). */
  peakOf: number | null;
}

export interface CloseupCaptureOptions {
  sampleRateHz: number;
  channels: number;
  settings: CloseupSettings;
  /** Silent runs are recognised this late (silenceMinSeconds). */
  silenceMinSeconds: number;
  /** A new per-channel loudest sample at or above this amplitude is a candidate (near-clip); null for none. */
  peakTrigger: { amplitude: number; rank: number } | null;
}

export function createCloseupCapture(o: CloseupCaptureOptions): CloseupCapture {
  const { sampleRateHz, channels, settings } = o;
  const frameBytes = channels * BYTES_PER_SAMPLE;
  const budgetFrames = Math.floor(settings.budgetBytes / frameBytes);
  const lookBackSeconds = settings.beforeSeconds + Math.max(RECOGNITION_LAG_SECONDS, o.silenceMinSeconds + 1);
  const ringFrames = Math.max(1, Math.min(budgetFrames, Math.ceil(lookBackSeconds * sampleRateHz)));
  const ring = Array.from({ length: channels }, () => new Float32Array(ringFrames));
  const before = Math.round(settings.beforeSeconds * sampleRateHz);
  const after = Math.round(settings.afterSeconds * sampleRateHz);
  const maxFrames = Math.max(1, Math.round(settings.maxSeconds * sampleRateHz));
  const maxSegments = Math.max(4, settings.cap * 2);
  let ringEnd = 0;
  let segments: Segment[] = [];
  let segmentFrames = 0;
  const peakBest = new Float64Array(channels);
  const peakSegment: (Segment | null)[] = new Array<Segment | null>(channels).fill(null);

  const ringStart = (): number => Math.max(0, ringEnd - ringFrames);

  /** Copies ring frames [from, to) into a new chunk of the segment. */
  const copyFromRing = (seg: Segment, from: number, to: number): void => {
    if (to <= from) return;
    const chunk: Float32Array[] = [];
    for (let c = 0; c < channels; c++) {
      const out = new Float32Array(to - from);
      const a = from % ringFrames;
      const first = Math.min(to - from, ringFrames - a);
      out.set(ring[c].subarray(a, a + first), 0);
      if (first < to - from) out.set(ring[c].subarray(0, to - from - first), first);
      chunk.push(out);
    }
    seg.chunks.push(chunk);
    seg.end = to;
    segmentFrames += to - from;
  };

  const remove = (seg: Segment): void => {
    segments = segments.filter((s) => s !== seg);
    segmentFrames -= seg.end - seg.start;
    for (let c = 0; c < channels; c++) if (peakSegment[c] === seg) peakSegment[c] = null;
  };

  /** Frees room for `frames` more by dropping segments ranked below `rank` (latest first); false if it cannot. */
  const makeRoom = (frames: number, rank: number, keep: Segment | null): boolean => {
    while (segmentFrames + frames > budgetFrames) {
      let victim: Segment | null = null;
      for (const s of segments) {
        if (s === keep || s.rank >= rank) continue;
        if (!victim || s.rank < victim.rank || (s.rank === victim.rank && s.start > victim.start)) victim = s;
      }
      if (!victim) return false;
      remove(victim);
    }
    return true;
  };

  /** Brings a segment up to min(wantedEnd, ringEnd), within the budget. */
  const catchUp = (seg: Segment): void => {
    const to = Math.min(seg.wantedEnd, ringEnd);
    if (to <= seg.end) return;
    const from = Math.max(seg.end, ringStart());
    if (!makeRoom(to - from, seg.rank + 1, seg)) {
      seg.wantedEnd = seg.end; // out of budget: this segment stops growing
      return;
    }
    if (from > seg.end) {
      // Frames fell out of the ring before they were copied (a block larger than the ring): the segment ends there.
      seg.wantedEnd = seg.end;
      return;
    }
    copyFromRing(seg, from, to);
  };

  const addCandidate = (startFrame: number, endFrame: number, rank: number, peakOf: number | null): Segment | null => {
    if (!(rank > 0)) return null;
    const s = Math.max(0, Math.floor(startFrame));
    const e = Math.max(s, Math.ceil(endFrame));
    const windowStart = Math.max(0, s - before);
    const windowEnd = Math.min(windowStart + maxFrames, e + after);
    for (const seg of segments) {
      if (seg.start <= windowStart + 1 && windowStart <= seg.wantedEnd) {
        seg.wantedEnd = Math.max(seg.wantedEnd, windowEnd);
        seg.rank = Math.max(seg.rank, rank);
        if (seg.peakOf !== peakOf) seg.peakOf = null;
        catchUp(seg);
        return seg;
      }
    }
    const start = Math.max(windowStart, ringStart());
    if (start >= ringEnd) return null;
    if (segments.length >= maxSegments) {
      let victim: Segment | null = null;
      for (const seg of segments) if (seg.rank < rank && (!victim || seg.rank < victim.rank || (seg.rank === victim.rank && seg.start > victim.start))) victim = seg;
      if (!victim) return null;
      remove(victim);
    }
    const firstFrames = Math.min(windowEnd, ringEnd) - start;
    if (!makeRoom(firstFrames, rank, null)) return null;
    const seg: Segment = { start, end: start, wantedEnd: windowEnd, rank, chunks: [], peakOf };
    segments.push(seg);
    copyFromRing(seg, start, start + firstFrames);
    return seg;
  };

  const peak = (c: number, amplitude: number, frame: number): void => {
    const trigger = o.peakTrigger;
    // Strictly louder, as the near-clip finding takes the first of equal peaks.
    if (!trigger || amplitude < trigger.amplitude || amplitude <= peakBest[c]) return;
    peakBest[c] = amplitude;
    // Only the loudest sample can become the near-clip finding: the earlier candidate is let go.
    const old = peakSegment[c];
    if (old && old.peakOf === c) remove(old);
    peakSegment[c] = addCandidate(frame, frame, trigger.rank, c);
  };

  return {
    push(block) {
      const frames = block.frames;
      if (frames <= 0) return;
      // The ring keeps the last ringFrames frames; a block longer than the ring leaves only its tail.
      const skip = Math.max(0, frames - ringFrames);
      for (let c = 0; c < channels; c++) {
        const x = block.channels[c];
        let at = (block.startFrame + skip) % ringFrames;
        let i = skip;
        while (i < frames) {
          const n = Math.min(frames - i, ringFrames - at);
          ring[c].set(x.subarray(i, i + n), at);
          i += n;
          at = (at + n) % ringFrames;
        }
      }
      ringEnd = block.startFrame + frames;
      for (const seg of segments) if (seg.end < seg.wantedEnd) catchUp(seg);
    },
    peak,
    candidate(startFrame, endFrame, rank) {
      addCandidate(startFrame, endFrame, rank, null);
    },
    finish() {
      const out: CapturedSegment[] = segments
        .filter((s) => s.end > s.start)
        .map((s) => ({ startFrame: s.start, channels: joinChunks(s.chunks, channels, s.end - s.start) }));
      const tailStart = ringStart();
      if (ringEnd > tailStart) {
        const tail: Segment = { start: tailStart, end: tailStart, wantedEnd: ringEnd, rank: 0, chunks: [], peakOf: null };
        copyFromRing(tail, tailStart, ringEnd);
        out.push({ startFrame: tailStart, channels: tail.chunks[0] });
      }
      segments = [];
      return out.sort((a, b) => a.startFrame - b.startFrame);
    },
    get heldBytes() {
      return (ringFrames + segmentFrames) * frameBytes;
    },
  };
}

function joinChunks(chunks: Float32Array[][], channels: number, frames: number): Float32Array[] {
  if (chunks.length === 1) return chunks[0];
  const out = Array.from({ length: channels }, () => new Float32Array(frames));
  let at = 0;
  for (const chunk of chunks) {
    for (let c = 0; c < channels; c++) out[c].set(chunk[c], at);
    at += chunk[0].length;
  }
  return out;
}
