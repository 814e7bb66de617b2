/**
 * The FLAC framer (shared/src/flac/flacFramer.ts) with its WebAssembly sync search and CRC-16 (flacFrameScan.wat)
 * and with its JavaScript loops: over files Debian's flac made (the outside reference: `flac -t` accepts them
 * whole), intact and with bytes flipped, pushed in odd slices, both give the same frames, gaps and trailing
 * bytes, and on the intact file every frame is whole and no gap appears.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFlacFramer } from "../../shared/src/flac/flacFramer.ts";
import { readFlacLayout, type FlacLayout } from "../../shared/src/flac/flacLayout.ts";
import { byteSourceFromBytes } from "../../shared/src/wav/byteSource.ts";
import { synthesiseWav } from "../../scripts/bench/synthWav.ts";

const hasFlac = spawnSync("flac", ["--version"], { stdio: "ignore" }).status === 0;

function frameEvents(file: Uint8Array, layout: FlacLayout, wasm: boolean): string[] {
  const events: string[] = [];
  const framer = createFlacFramer(layout.streamInfo, layout.dataOffset, {
    frame: (bytes, header, offset, tentative) => {
      // The last frame's end is offered where its CRC-16 comes to 0; libFLAC would turn down a chance zero inside
      // it (flacStreamDecoder.ts): here, anything short of the file's end.
      if (tentative && offset + bytes.length !== file.length) return false;
      events.push(`frame ${header.sampleNumber} ${header.blockSize} at ${offset}, ${bytes.length} bytes${tentative ? " (last)" : ""}`);
      return true;
    },
    gap: (sample, frames, offset, why) => {
      events.push(`gap ${sample} ${frames} at ${offset}: ${why}`);
    },
  }, { wasm });
  // Odd slice sizes, so sync codes, headers and frames straddle the pushes.
  for (let at = layout.dataOffset, n = 1; at < file.length; at += n, n = (n * 7 + 4093) % 70001) framer.push(file.subarray(at, at + n));
  events.push(`trailing ${framer.finish().trailingBytes}`);
  return events;
}

describe.runIf(hasFlac)("the FLAC framer with and without its WebAssembly kernel", () => {
  let dir = "";
  const files = new Map<string, Uint8Array>();
  beforeAll(async () => {
    dir = mkdtempSync(path.join(tmpdir(), "tidemark-framescan-"));
    for (const [name, bits, block] of [["s24", 24, 4096], ["s16", 16, 1152]] as const) {
      const wav = path.join(dir, `${name}.wav`);
      const flac = path.join(dir, `${name}.flac`);
      await synthesiseWav({ path: wav, seconds: 20, sampleRateHz: 48000, channels: 2, bitDepth: bits, noise: "pink", rmsDbfs: -20, seed: bits });
      execFileSync("flac", ["-s", "-f", "-5", "-b", String(block), wav, "-o", flac]);
      expect(spawnSync("flac", ["-s", "-t", flac]).status).toBe(0);
      files.set(name, new Uint8Array(readFileSync(flac)));
    }
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it.each(["s24", "s16"])("%s: every frame whole, as flac -t found it, with both", async (name) => {
    const file = files.get(name)!;
    const layout = await readFlacLayout(byteSourceFromBytes(file));
    const events = frameEvents(file, layout, true);
    expect(events.filter((e) => e.startsWith("gap"))).toEqual([]);
    expect(events.filter((e) => e.startsWith("frame")).length).toBe(Math.ceil(layout.streamInfo.totalSamples / layout.streamInfo.maxBlockSize));
    expect(events.at(-1)).toBe("trailing 0");
    expect(frameEvents(file, layout, false)).toEqual(events);
  });

  it.each([["s24", 97003], ["s16", 31013], ["s16", 4099]])("%s with a byte flipped every %i: the same frames and gaps with both", async (name, step) => {
    const file = files.get(name)!.slice();
    const layout = await readFlacLayout(byteSourceFromBytes(file));
    for (let at = layout.dataOffset + 5000; at < file.length; at += step) file[at] ^= 0x5a;
    const events = frameEvents(file, layout, true);
    expect(events.filter((e) => e.startsWith("gap")).length).toBeGreaterThan(3);
    expect(events.filter((e) => e.startsWith("frame")).length).toBeGreaterThan(50);
    expect(frameEvents(file, layout, false)).toEqual(events);
  });
});
