import { describe, expect, it } from "vitest";
import { modesForChannels, parseCodingHistory } from "../../shared/src/metadata/codingHistory.ts";

// Row layout per EBU R 98 (1999): CR LF-ended rows of comma-separated A= F= B= W= M= T= items.
describe("parseCodingHistory (EBU R 98)", () => {
  it("reads an analogue transfer followed by its digitisation", () => {
    const rows = parseCodingHistory("A=ANALOGUE,M=stereo,T=Studer A807; 7.5 ips\r\nA=PCM,F=96000,W=24,M=stereo,T=Harbourside ADC 2\r\n");
    expect(rows).toHaveLength(2);
    expect(rows[0]).toMatchObject({ algorithm: "ANALOGUE", mode: "stereo", sampleRateHz: null, wordLengthBits: null, text: "Studer A807; 7.5 ips" });
    expect(rows[1]).toMatchObject({ algorithm: "PCM", sampleRateHz: 96000, wordLengthBits: 24, mode: "stereo", text: "Harbourside ADC 2", unknown: [] });
    expect(rows[1].raw).toBe("A=PCM,F=96000,W=24,M=stereo,T=Harbourside ADC 2");
  });

  it("keeps commas inside T= text and reads B= bit rates of coded stages", () => {
    const [row] = parseCodingHistory("A=MPEG1L2,F=48000,B=192,W=16,M=joint-stereo,T=from tape, reel 4, side A");
    expect(row).toMatchObject({ algorithm: "MPEG1L2", bitRateKbps: 192, mode: "joint-stereo", text: "from tape, reel 4, side A" });
  });

  it("accepts bare LF and CR line ends, skips blank lines, and lower-cases the mode", () => {
    const rows = parseCodingHistory("A=ANALOGUE,M=MONO\n\nA=PCM,F=44100,W=16,M=Mono\r");
    expect(rows.map((r) => r.mode)).toEqual(["mono", "mono"]);
  });

  it("keeps what it cannot read as unknown items instead of dropping it", () => {
    const [row] = parseCodingHistory("A=PCM,F=fast,W=24,Z=9,loose words");
    expect(row.sampleRateHz).toBeNull();
    expect(row.wordLengthBits).toBe(24);
    expect(row.unknown).toEqual(["F=fast", "Z=9", "loose words"]);
  });

  it("gives no rows for an empty history", () => {
    expect(parseCodingHistory("")).toEqual([]);
    expect(parseCodingHistory("\r\n  \r\n")).toEqual([]);
  });

  it("fits mode words to channel counts", () => {
    expect(modesForChannels(1)).toEqual(["mono"]);
    expect(modesForChannels(2)).toContain("dual-mono");
    expect(modesForChannels(2)).not.toContain("mono");
    expect(modesForChannels(6)).toContain("multitrack");
  });
});
