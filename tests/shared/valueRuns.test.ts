import { describe, expect, it } from "vitest";
import { createValueRunTracker, type ValueRun } from "../../shared/src/analysis/valueRuns.ts";
import { seededRandom } from "../fixtures/synth.ts";

/** Runs by their definition: maximal stretches of equal neighbours, with the samples around them. */
function naiveRuns(x: Float32Array, minLength: number): Omit<ValueRun, "channel">[] {
  const out: Omit<ValueRun, "channel">[] = [];
  let start = 0;
  for (let i = 1; i <= x.length; i++) {
    if (i === x.length || x[i] !== x[start]) {
      if (i - start >= minLength) {
        out.push({ value: x[start], startFrame: start, length: i - start, before: start > 0 ? x[start - 1] : null, after: i < x.length ? x[i] : null });
      }
      start = i;
    }
  }
  return out;
}

describe("createValueRunTracker", () => {
  it.each([1, 2, 3, 7, 64, 5000])("finds exactly the runs of the definition with blocks of %i frames", (blockFrames) => {
    const rnd = seededRandom(blockFrames);
    // Values from a small alphabet so that runs of every length occur, including across block edges.
    const x = new Float32Array(3000);
    let v = 0;
    for (let i = 0; i < x.length; i++) {
      if (rnd() < 0.35) v = Math.floor(rnd() * 4) - 1;
      x[i] = v / 4;
    }
    const found: ValueRun[] = [];
    const tracker = createValueRunTracker(1, 3, (run) => found.push(run));
    for (let at = 0; at < x.length; at += blockFrames) tracker.push([x.subarray(at, at + blockFrames)], Math.min(blockFrames, x.length - at));
    tracker.finish();
    expect(found.map(({ channel: _channel, ...rest }) => rest)).toEqual(naiveRuns(x, 3));
    expect(found.length).toBeGreaterThan(50);
  });

  it("keeps channels apart", () => {
    const found: ValueRun[] = [];
    const tracker = createValueRunTracker(2, 2, (run) => found.push(run));
    tracker.push([Float32Array.from([1, 1, 2, 3]), Float32Array.from([5, 6, 6, 6])], 4);
    tracker.finish();
    expect(found).toEqual([
      { channel: 0, value: 1, startFrame: 0, length: 2, before: null, after: 2 },
      { channel: 1, value: 6, startFrame: 1, length: 3, before: 5, after: null },
    ]);
  });
});
