/**
 * cli/src/scan/ownedBuffers.ts picks the buffers the second thread moves with its result instead of
 * copying: only those a typed array spans whole, each once. Moving a buffer a view shares with other data
 * would detach that data too (the structured clone algorithm's transfer, HTML Living Standard).
 */
import { MessageChannel } from "node:worker_threads";
import { describe, expect, it } from "vitest";
import { ownedBuffers } from "../../cli/src/scan/ownedBuffers.ts";

describe("ownedBuffers", () => {
  it("finds whole-buffer typed arrays anywhere in the result, once each, and leaves shared views out", () => {
    const grid = new Float32Array(8);
    const waveform = new Uint8Array(4);
    const big = new ArrayBuffer(64);
    const slice = new Float32Array(big, 16, 4);
    const shared = new Float32Array(new SharedArrayBuffer(16));
    const found = ownedBuffers({ spectral: { grid, again: grid, list: [waveform, { slice }] }, shared, n: 3, s: "x", nothing: null });
    expect(found).toHaveLength(2);
    expect(found).toContain(grid.buffer);
    expect(found).toContain(waveform.buffer);
  });

  it("gives a list postMessage accepts: the arrays arrive intact and leave the sender detached", async () => {
    const grid = Float32Array.from([1, 2, 3]);
    const { port1, port2 } = new MessageChannel();
    const arrived = new Promise<{ grid: Float32Array }>((resolve) => port2.once("message", resolve));
    const result = { grid };
    port1.postMessage(result, ownedBuffers(result));
    expect(grid.length).toBe(0);
    expect([...(await arrived).grid]).toEqual([1, 2, 3]);
    port1.close();
    port2.close();
  });
});
