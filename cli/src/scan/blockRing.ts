/**
 * A single-producer, single-consumer ring of decoded blocks in a SharedArrayBuffer, so a second thread
 * sees every block of the pass without a message per block. The producer (the reading thread) copies a
 * block into the next free slot and waits only while every slot is full, which bounds memory to the ring
 * whatever the speed of either side; the consumer (spectralThread.ts) waits for the next slot.
 *
 * Both sides wait with Atomics.wait in bounded steps and look at the state word between them, so a side
 * that fails (the consumer sets `failed`, also when its script cannot load; the producer `aborted`)
 * releases the other instead of hanging it.
 */
import type { AudioBlock } from "@tidemark/shared/types/analysis";

/** Control words: blocks written, blocks read, state. */
const WRITTEN = 0;
const READ = 1;
const STATE = 2;
export const RING_RUNNING = 0;
export const RING_ENDED = 1;
export const RING_ABORTED = 2;
export const RING_FAILED = 3;
/** Index of the state word in `control`, for a bootstrap that must mark the ring failed without this module. */
export const RING_STATE_INDEX = STATE;

/** Slots: enough to ride out the other side's hiccups (8 × 512 KiB for stereo), fewer for wide files. */
const MAX_RING_SLOTS = 8;
const MIN_RING_SLOTS = 2;
/** Samples the ring aims to stay under; two slots are the least it works with, whatever the width. */
const RING_BUDGET_BYTES = 8 << 20;

/**
 * When the reading thread decodes FLAC and the other thread measures everything (spectralThread.ts, part
 * "all"), the reader is the slower side once both run, but the other thread starts late and slow (its own
 * isolate, cold code): with 8 slots the reader waited 50–110 ms for it at the start of the 600 s bench file
 * (timestamps on both threads, 3 runs, 5 December 2026), time the scan's wall clock then lacks. 16 stereo slots
 * (8 MiB, ≈ 22 s of 48 kHz audio) let it decode part of that ahead instead. Memory decides the size: the ring
 * cycles through every slot, so all of it stays resident, and the scan's peak RSS rises with it (the 600 s FLAC
 * on a busy machine, 5 December 2026: 121 MB with 8 slots and 135 MB with 24, medians of 4 runs; with 16,
 * 119.5 MB against 118 MB before this change, medians of 6 runs alternating with it), against issue #22's
 * 150 MB, which the 4-hour FLAC (131 MB before) must also keep.
 */
export const DECODING_READER_RING_BUDGET_BYTES = 8 << 20;
const DECODING_READER_MAX_SLOTS = 16;

/**
 * Slots for blocks of this shape: up to 8 within the budget, never fewer than 2 (`decodingReader`: up to 16
 * within DECODING_READER_RING_BUDGET_BYTES).
 */
export function ringSlotsFor(channels: number, slotFrames: number, decodingReader = false): number {
  const slotBytes = channels * slotFrames * Float32Array.BYTES_PER_ELEMENT;
  const budget = decodingReader ? DECODING_READER_RING_BUDGET_BYTES : RING_BUDGET_BYTES;
  const most = decodingReader ? DECODING_READER_MAX_SLOTS : MAX_RING_SLOTS;
  return Math.max(MIN_RING_SLOTS, Math.min(most, Math.floor(budget / slotBytes)));
}
/** A wait step; between steps each side looks at the state word. */
const WAIT_STEP_MS = 250;
/** No progress for this long means the other side is gone (a crash that could not say so). */
const STALL_LIMIT_MS = 120_000;

export interface BlockRingShape {
  channels: number;
  /** Frames a slot holds: the largest block the reader hands out. */
  slotFrames: number;
  slots: number;
}

/** The shared memory of one ring; posted to the consumer thread as workerData (shared, not copied). */
export interface BlockRingMemory extends BlockRingShape {
  control: SharedArrayBuffer;
  meta: SharedArrayBuffer;
  samples: SharedArrayBuffer;
}

export function allocateBlockRing(shape: BlockRingShape): BlockRingMemory {
  const { channels, slotFrames, slots } = shape;
  for (const [name, v] of Object.entries(shape)) {
    if (!Number.isInteger(v) || v < 1) throw new RangeError(`block ring: ${name} must be a whole number ≥ 1, got ${v}`);
  }
  return {
    ...shape,
    control: new SharedArrayBuffer(3 * Int32Array.BYTES_PER_ELEMENT),
    meta: new SharedArrayBuffer(2 * slots * Float64Array.BYTES_PER_ELEMENT),
    samples: new SharedArrayBuffer(slots * channels * slotFrames * Float32Array.BYTES_PER_ELEMENT),
  };
}

export class BlockRingError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "BlockRingError";
  }
}

/**
 * Waits while control[index] still holds `seen` and the state is `running`. The producer gives up after
 * a long stall (a consumer that crashed without a word); the consumer waits as long as reading takes.
 */
function waitWhile(control: Int32Array, index: number, seen: number, side: string, limitMs = Number.POSITIVE_INFINITY): void {
  let waited = 0;
  while (Atomics.load(control, index) === seen) {
    const state = Atomics.load(control, STATE);
    if (state === RING_FAILED || state === RING_ABORTED) return;
    if (index === WRITTEN && state === RING_ENDED) return;
    if (waited >= limitMs) throw new BlockRingError(`block ring: the ${side} made no progress for ${limitMs / 1000} s`);
    Atomics.wait(control, index, seen, WAIT_STEP_MS);
    waited += WAIT_STEP_MS;
  }
}

export interface BlockRingWriter {
  /** Copies the block into the ring (waiting for a free slot); throws if the consumer has failed. */
  push(block: AudioBlock): void;
  /** No more blocks: the consumer finishes once it has read the rest. */
  end(): void;
  /** Stops the consumer without finishing (the read failed or was cancelled). */
  abort(): void;
  /** The consumer said it failed (its message comes through its own channel). */
  readonly failed: boolean;
}

export function createBlockRingWriter(memory: BlockRingMemory): BlockRingWriter {
  const { channels, slotFrames, slots } = memory;
  const control = new Int32Array(memory.control);
  const meta = new Float64Array(memory.meta);
  const samples = new Float32Array(memory.samples);
  let written = 0;
  return {
    push(block) {
      if (block.channels.length !== channels) throw new BlockRingError(`block ring: expected ${channels} channels, got ${block.channels.length}`);
      if (block.frames > slotFrames) throw new BlockRingError(`block ring: a slot holds ${slotFrames} frames, the block has ${block.frames}`);
      for (;;) {
        const read = Atomics.load(control, READ);
        if (Atomics.load(control, STATE) === RING_FAILED) throw new BlockRingError("block ring: the consumer thread failed");
        // Until the consumer has taken a block, no more than the usual slots: a consumer that fails while setting
        // up is then still noticed during the read, as one thread notices it, whatever the ring's size.
        if (written - read < (read > 0 ? slots : Math.min(slots, MAX_RING_SLOTS))) break;
        waitWhile(control, READ, read, "consumer thread", STALL_LIMIT_MS);
      }
      const slot = written % slots;
      for (let c = 0; c < channels; c++) samples.set(block.channels[c].subarray(0, block.frames), (slot * channels + c) * slotFrames);
      meta[2 * slot] = block.frames;
      meta[2 * slot + 1] = block.startFrame;
      written += 1;
      Atomics.store(control, WRITTEN, written);
      Atomics.notify(control, WRITTEN);
    },
    end() {
      Atomics.compareExchange(control, STATE, RING_RUNNING, RING_ENDED);
      Atomics.notify(control, WRITTEN);
    },
    abort() {
      Atomics.compareExchange(control, STATE, RING_RUNNING, RING_ABORTED);
      Atomics.notify(control, WRITTEN);
    },
    get failed() {
      return Atomics.load(control, STATE) === RING_FAILED;
    },
  };
}

/** Marks the ring failed from the consumer's side (it could not even start), releasing a waiting producer. */
export function failBlockRing(memory: BlockRingMemory): void {
  const control = new Int32Array(memory.control);
  Atomics.store(control, STATE, RING_FAILED);
  Atomics.notify(control, READ);
}

/**
 * Hands every block to `onBlock` in order, as views into the ring (valid only during the call, like a
 * decoder's reused buffers), until the producer ends the ring; returns false if it aborted instead.
 * An exception from `onBlock` marks the ring failed, so the producer stops waiting, and is rethrown.
 */
export function consumeBlockRing(memory: BlockRingMemory, onBlock: (block: AudioBlock) => void): boolean {
  const { channels, slotFrames, slots } = memory;
  const control = new Int32Array(memory.control);
  const meta = new Float64Array(memory.meta);
  const samples = new Float32Array(memory.samples);
  const views: Float32Array[][] = [];
  for (let s = 0; s < slots; s++) {
    views.push(Array.from({ length: channels }, (_, c) => samples.subarray((s * channels + c) * slotFrames, (s * channels + c + 1) * slotFrames)));
  }
  let read = 0;
  try {
    for (;;) {
      const written = Atomics.load(control, WRITTEN);
      if (read < written) {
        const slot = read % slots;
        onBlock({ channels: views[slot], frames: meta[2 * slot], startFrame: meta[2 * slot + 1] });
        read += 1;
        Atomics.store(control, READ, read);
        Atomics.notify(control, READ);
        continue;
      }
      const state = Atomics.load(control, STATE);
      if (state === RING_ABORTED) return false;
      // `ended` is set after the last block was counted: look at the count once more before stopping.
      if (state === RING_ENDED && Atomics.load(control, WRITTEN) === read) return true;
      waitWhile(control, WRITTEN, written, "reading thread");
    }
  } catch (error) {
    Atomics.store(control, STATE, RING_FAILED);
    Atomics.notify(control, READ);
    throw error;
  }
}
