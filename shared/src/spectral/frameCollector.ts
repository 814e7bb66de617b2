/**
 * Cuts the block stream into analysis frames where a schedule puts them, for all channels at once.
 * Blocks are copied in (their arrays are reused by the reader); hops shorter than the frame keep the
 * overlap by shifting, longer hops skip the samples between frames without touching them, and a
 * producer may leave those samples out altogether (see `nextNeededSample`).
 */
import type { AudioBlock } from "../types/analysis.ts";
import { frameStart, type FrameSchedule } from "./stftSchedule.ts";

export interface FrameCollector {
  push(block: AudioBlock): void;
  /**
   * For a file shorter than one frame: emits its samples once, centred in a zero-padded frame. Does
   * nothing if a frame was already emitted or nothing arrived.
   */
  flushShortFile(): void;
  readonly framesEmitted: number;
  /** Index of the first sample a frame still needs (Infinity when every frame is out): earlier ones may be skipped. */
  nextNeededSample(): number;
  /** One past the last sample of the frame being filled (Infinity when every frame is out). */
  nextFrameEnd(): number;
}

export interface FrameSink {
  /**
   * One frame per channel, frameSize samples each, valid until the callback returns. `validSamples`
   * is frameSize except for the padded frame of a short file, whose samples start at `paddingBefore`.
   */
  (frames: Float32Array[], frameIndex: number, validSamples: number, paddingBefore: number): void;
}

export function createFrameCollector(o: {
  channels: number;
  /** Where frames start; frames beyond its count are ignored (bounds the work if a stream runs long). */
  schedule: FrameSchedule;
  onFrame: FrameSink;
}): FrameCollector {
  const { channels, schedule, onFrame } = o;
  const { frameSize } = schedule;
  const maxFrames = schedule.frameCount;
  const buffers: Float32Array[] = [];
  for (let c = 0; c < channels; c++) buffers.push(new Float32Array(frameSize));
  let fill = 0;
  let skip = 0;
  let emitted = 0;
  let consumed = 0;

  function emit(): void {
    onFrame(buffers, emitted, frameSize, 0);
    emitted++;
    const advance = frameStart(schedule, emitted) - frameStart(schedule, emitted - 1);
    if (advance < frameSize) {
      for (let c = 0; c < channels; c++) buffers[c].copyWithin(0, advance, frameSize);
      fill = frameSize - advance;
    } else {
      fill = 0;
      skip = advance - frameSize;
    }
  }

  return {
    push(block) {
      if (block.startFrame !== consumed) {
        const gap = block.startFrame - consumed;
        if (gap < 0 || (gap > skip && emitted < maxFrames)) {
          throw new Error(`frame collector expected samples from ${consumed + (gap < 0 ? 0 : skip)} on, got a block starting at ${block.startFrame}`);
        }
        skip = Math.max(0, skip - gap);
        consumed = block.startFrame;
      }
      const frames = block.frames;
      consumed += frames;
      let i = 0;
      while (i < frames && emitted < maxFrames) {
        if (skip > 0) {
          const n = Math.min(skip, frames - i);
          skip -= n;
          i += n;
          continue;
        }
        const n = Math.min(frameSize - fill, frames - i);
        // A native copy (float32 to float32: the same bits): as a loop, this push ran hot enough for V8 to
        // optimise it, twice, with each frame's analysis inlined, on every short file (issue #22).
        for (let c = 0; c < channels; c++) buffers[c].set(block.channels[c].subarray(i, i + n), fill);
        fill += n;
        i += n;
        if (fill === frameSize) emit();
      }
    },
    flushShortFile() {
      if (emitted > 0 || fill === 0 || maxFrames < 1) return;
      const paddingBefore = Math.floor((frameSize - fill) / 2);
      const padded: Float32Array[] = [];
      for (let c = 0; c < channels; c++) {
        const frame = new Float32Array(frameSize);
        frame.set(buffers[c].subarray(0, fill), paddingBefore);
        padded.push(frame);
      }
      onFrame(padded, 0, fill, paddingBefore);
      emitted++;
    },
    get framesEmitted() {
      return emitted;
    },
    nextNeededSample() {
      return emitted >= maxFrames ? Infinity : consumed + skip;
    },
    nextFrameEnd() {
      return emitted >= maxFrames ? Infinity : consumed + skip + frameSize - fill;
    },
  };
}
