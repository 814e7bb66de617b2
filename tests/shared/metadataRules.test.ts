import { describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { findBuiltinProfile } from "../../shared/src/profiles/builtinProfiles.ts";
import { judge } from "../../shared/src/profiles/judge.ts";
import { ProfileError, validateProfile } from "../../shared/src/profiles/parseProfile.ts";
import type { AudioFormat, FileMetadata, FileMetrics, Finding } from "../../shared/src/types/report.ts";
import { byteSourceFromBytes, readWavLayout } from "../../shared/src/wav/index.ts";
import { sine } from "../fixtures/synth.ts";
import { encodeWav, type WavEncodeOptions } from "../fixtures/wavWriter.ts";

// Hand-built BWF files, read by the real reader, then judged by the built-in profiles' metadata rules.
// Sources: FADGI BWF guideline v2 (2012) field classes; EBU Tech 3285 v2 (2011) field formats and loudness
// fields; EBU R 98 CodingHistory rows; SMPTE 330M UMID (label prefix and length byte, from memory).

type Bext = NonNullable<WavEncodeOptions["bext"]>;

/** A basic SMPTE 330M UMID: universal label 06 0A 2B 34 …, length byte 0x13, then 19 bytes of instance and material. */
function basicUmid(): Uint8Array {
  const u = new Uint8Array(64);
  u.set([0x06, 0x0a, 0x2b, 0x34, 0x01, 0x01, 0x01, 0x05, 0x01, 0x01, 0x0d, 0x20, 0x13], 0);
  for (let i = 13; i < 32; i++) u[i] = (i * 29 + 7) & 0xff;
  return u;
}

const GOOD_BEXT: Bext = {
  description: "Ferry Terminal Interviews 1978, reel 4 side A",
  originator: "Harbourside Sound Archive",
  originatorReference: "HSA-FTI-1978-004A",
  originationDate: "2024-03-18",
  originationTime: "14:02:55",
  timeReference: 0,
  umid: basicUmid(),
  codingHistory: "A=ANALOGUE,M=stereo,T=Studer A807\r\nA=PCM,F=48000,W=24,M=stereo,T=Harbourside ADC 2\r\n",
};

async function metadataOf(o: Partial<WavEncodeOptions>, channels = 2): Promise<{ metadata: FileMetadata; format: AudioFormat }> {
  const x = sine({ frequencyHz: 997, sampleRateHz: 48000, seconds: 0.05, peakDbfs: -6 });
  const bytes = encodeWav(Array.from({ length: channels }, () => x), { sampleRateHz: 48000, bitDepth: 24, ...o });
  const layout = await readWavLayout(byteSourceFromBytes(bytes));
  const format: AudioFormat = {
    container: layout.container,
    encoding: layout.encoding,
    sampleRateHz: layout.sampleRateHz,
    bitDepth: layout.bitDepth,
    channels: layout.channels,
    durationSeconds: layout.totalFrames / layout.sampleRateHz,
  };
  return { metadata: layout.metadata, format };
}

function metrics(o: Partial<FileMetrics> = {}): FileMetrics {
  return {
    samplePeakDbfs: -6, truePeakDbtp: -5.9, rmsDbfs: -9, integratedLufs: -23, loudnessRangeLu: 4.2, maxMomentaryLufs: -18.5, maxShortTermLufs: -20.1,
    clippedSamples: 0, clipEvents: 0, dcOffsetPercent: 0, bandwidthHz: 20000, dominantFrequencyHz: 997, noiseFloorDbfs: -90, stereoCorrelation: 1,
    effectiveBitDepth: 24, bands: { octave: [], third: [] }, channels: [], ...o,
  };
}

function judged(profileName: string, input: { metadata: FileMetadata; format: AudioFormat }, m: FileMetrics | null = metrics()): Finding[] {
  const profile = findBuiltinProfile(profileName)!;
  return judge(profile, { format: input.format, metrics: m, findings: [], error: null, metadata: input.metadata }).findings;
}

const byCode = (findings: Finding[], code: string) => findings.filter((f) => f.code === code);

describe("presence rules (FADGI BWF guideline v2)", () => {
  it("a preservation master with every strongly recommended field and IARL has no metadata findings", async () => {
    const file = await metadataOf({ bext: GOOD_BEXT, info: { IARL: "US, Harbourside Sound Archive", INAM: "Ferry Terminal Interviews" } });
    expect(file.metadata.info?.IARL).toBe("US, Harbourside Sound Archive");
    expect(judged("preservation-master", file)).toEqual([]);
  });

  it("preservation-master fails a plain WAV: what FADGI strongly recommends is required", async () => {
    const file = await metadataOf({});
    const missing = byCode(judged("preservation-master", file), "metadata-missing");
    expect(missing).toHaveLength(1);
    expect(missing[0].severity).toBe("fail");
    for (const f of ["bext", "bext.Description", "bext.Originator", "bext.OriginatorReference", "bext.OriginationDate", "bext.UMID"]) {
      expect(missing[0].message).toContain(f);
    }
    const recommended = byCode(judged("preservation-master", file), "metadata-recommended-missing");
    expect(recommended.map((f) => [f.severity, f.message])).toEqual([["info", "recommended metadata missing or empty: bext.TimeReference, INFO.IARL"]]);
  });

  it("names only the fields that are empty", async () => {
    const file = await metadataOf({ bext: { ...GOOD_BEXT, originatorReference: "", umid: undefined, version: 1 }, info: { IARL: "US, HSA" } });
    expect(byCode(judged("preservation-master", file), "metadata-missing").map((f) => f.message)).toEqual([
      "required metadata missing or empty: bext.OriginatorReference, bext.UMID",
    ]);
  });

  it("access-copy demands no fields, so a plain WAV has no metadata findings", async () => {
    expect(judged("access-copy", await metadataOf({}))).toEqual([]);
  });
});

describe("formats (EBU Tech 3285, SMPTE 330M)", () => {
  it.each([
    ["2024:03:18", "OriginationDate"],
    ["18-03-2024", "OriginationDate"],
    ["2024-02-30", "OriginationDate"],
  ])("OriginationDate %s is reported as not yyyy-mm-dd", async (date, field) => {
    const file = await metadataOf({ bext: { ...GOOD_BEXT, originationDate: date }, info: { IARL: "x" } });
    const found = byCode(judged("preservation-master", file), "metadata-format");
    expect(found).toHaveLength(1);
    expect(found[0]).toMatchObject({ severity: "fail", message: expect.stringContaining(`${field} "${date}"`) });
    // The access copy warns on the same fault.
    expect(byCode(judged("access-copy", file), "metadata-format")[0]?.severity).toBe("warn");
  });

  it.each(["14.02.55", "24:00:00", "2:02:55"])("OriginationTime %s is reported as not hh:mm:ss", async (time) => {
    const file = await metadataOf({ bext: { ...GOOD_BEXT, originationTime: time } });
    expect(byCode(judged("access-copy", file), "metadata-format").map((f) => f.message)).toEqual([
      `bext OriginationTime "${time}" is not a time as hh:mm:ss (EBU Tech 3285)`,
    ]);
  });

  it("a UMID without the SMPTE label, or with a length byte that does not fit its size, is reported", async () => {
    const noLabel = new Uint8Array(64).fill(0x41, 0, 32);
    const a = await metadataOf({ bext: { ...GOOD_BEXT, umid: noLabel } });
    expect(byCode(judged("access-copy", a), "metadata-format")[0]?.message).toMatch(/universal label/);
    // Length byte 0x33 (extended) but only 32 bytes used.
    const short = basicUmid();
    short[12] = 0x33;
    const b = await metadataOf({ bext: { ...GOOD_BEXT, umid: short } });
    expect(byCode(judged("access-copy", b), "metadata-format")[0]?.message).toMatch(/length byte is 0x33 but 32 bytes/);
    // A well-formed extended UMID (64 bytes, 0x33) passes.
    const extended = basicUmid();
    extended[12] = 0x33;
    for (let i = 32; i < 64; i++) extended[i] = (i * 13 + 1) & 0xff;
    const c = await metadataOf({ bext: { ...GOOD_BEXT, umid: extended } });
    expect(c.metadata.bext?.umid).toHaveLength(128);
    expect(byCode(judged("access-copy", c), "metadata-format")).toEqual([]);
  });

  it("bext version must fit the fields used: a UMID needs version 1, loudness fields version 2", async () => {
    const v0 = await metadataOf({ bext: { ...GOOD_BEXT, version: 0 } });
    expect(byCode(judged("access-copy", v0), "bext-version-mismatch").map((f) => f.message)).toEqual([
      "bext version 0 but a UMID is set; the UMID needs version 1 or later (EBU Tech 3285)",
    ]);
    const loud = { loudnessValue: -23, loudnessRange: 4.2, maxTruePeakLevel: -5.9, maxMomentaryLoudness: -18.5, maxShortTermLoudness: -20.1 };
    const v1 = await metadataOf({ bext: { ...GOOD_BEXT, version: 1, loudness: loud } });
    expect(byCode(judged("access-copy", v1), "bext-version-mismatch")[0]?.message).toMatch(/loudness fields are set; they need version 2/);
    const v2 = await metadataOf({ bext: { ...GOOD_BEXT, version: 2, loudness: loud } });
    expect(byCode(judged("access-copy", v2), "bext-version-mismatch")).toEqual([]);
    const v3 = await metadataOf({ bext: { ...GOOD_BEXT, version: 3 } });
    expect(byCode(judged("access-copy", v3), "bext-version-mismatch")[0]?.message).toMatch(/version 3 is not defined/);
  });
});

describe("version-2 loudness fields against the measurement (EBU Tech 3285 v2; tolerance 0.5 LU/dB, common practice)", () => {
  const loud = { loudnessValue: -23.3, loudnessRange: 4.2, maxTruePeakLevel: -5.9, maxMomentaryLoudness: -18.5, maxShortTermLoudness: -20.1 };

  it("values within 0.5 of the measurement pass; values beyond it are each reported", async () => {
    const ok = await metadataOf({ bext: { ...GOOD_BEXT, version: 2, loudness: loud } });
    expect(ok.metadata.bext?.loudness).toEqual(loud);
    expect(byCode(judged("broadcast-loudness", ok), "bext-loudness-mismatch")).toEqual([]);
    const off = await metadataOf({ bext: { ...GOOD_BEXT, version: 2, loudness: { ...loud, loudnessValue: -16, maxTruePeakLevel: -5.3 } } });
    expect(byCode(judged("broadcast-loudness", off), "bext-loudness-mismatch").map((f) => f.message)).toEqual([
      "bext LoudnessValue -16.00 LUFS but -23.00 LUFS measured (tolerance 0.5 LU, EBU Tech 3285 v2)",
      "bext MaxTruePeakLevel -5.30 dBTP but -5.90 dBTP measured (tolerance 0.5 dB, EBU Tech 3285 v2)",
    ]);
  });

  it("fields marked not computed (0x7FFF) are not compared", async () => {
    const file = await metadataOf({ bext: { ...GOOD_BEXT, version: 2, loudness: { ...loud, loudnessValue: null, loudnessRange: null } } });
    expect(file.metadata.bext?.loudness?.loudnessValue).toBeNull();
    expect(byCode(judged("broadcast-loudness", file, metrics({ loudnessRangeLu: 12 })), "bext-loudness-mismatch")).toEqual([]);
  });

  it("reads the loudness fields as written by wavefile (an independent writer from npm)", async () => {
    const wav = new WaveFile();
    const x = sine({ frequencyHz: 997, sampleRateHz: 48000, seconds: 0.05, peakDbfs: -6 });
    wav.fromScratch(1, 48000, "24", Array.from(x, (s) => Math.round(s * 8388607)));
    const bext = wav.bext as Record<string, unknown>;
    Object.assign(bext, {
      chunkId: "bext",
      version: 2,
      // wavefile packs these as unsigned 16-bit: negative values go in as two's complement.
      loudnessValue: -2310 & 0xffff,
      loudnessRange: 420,
      maxTruePeakLevel: -590 & 0xffff,
      maxMomentaryLoudness: -1850 & 0xffff,
      maxShortTermLoudness: 0x7fff,
      codingHistory: "A=PCM,F=48000,W=24,M=mono\r\n",
    });
    const layout = await readWavLayout(byteSourceFromBytes(wav.toBuffer()));
    expect(layout.metadata.bext?.version).toBe(2);
    expect(layout.metadata.bext?.loudness).toEqual({ loudnessValue: -23.1, loudnessRange: 4.2, maxTruePeakLevel: -5.9, maxMomentaryLoudness: -18.5, maxShortTermLoudness: null });
  });
});

describe("CodingHistory's last row against the file (EBU R 98)", () => {
  it.each([
    ["A=PCM,F=44100,W=24,M=stereo", /F=44100 but the file is 48000 Hz/],
    ["A=PCM,F=48000,W=16,M=stereo", /W=16 but the file is 24-bit/],
    ["A=PCM,F=48000,W=24,M=mono", /M=mono but the file has 2 channels/],
    ["A=ANALOGUE,M=stereo,T=Studer A807", /it gives no F=, W=/],
  ])("last row %s is reported", async (last, why) => {
    const file = await metadataOf({ bext: { ...GOOD_BEXT, codingHistory: `A=ANALOGUE,M=stereo,T=reel\r\n${last}\r\n` }, info: { IARL: "x" } });
    const found = byCode(judged("preservation-master", file), "coding-history-mismatch");
    expect(found).toHaveLength(1);
    expect(found[0].severity).toBe("fail");
    expect(found[0].message).toMatch(why);
    expect(byCode(judged("access-copy", file), "coding-history-mismatch")[0]?.severity).toBe("warn");
  });

  it("a mono file whose last row says mono, and a file without CodingHistory, pass", async () => {
    const mono = await metadataOf({ bext: { ...GOOD_BEXT, codingHistory: "A=PCM,F=48000,W=24,M=mono\r\n" } }, 1);
    expect(byCode(judged("access-copy", mono), "coding-history-mismatch")).toEqual([]);
    const none = await metadataOf({ bext: { ...GOOD_BEXT, codingHistory: "" } });
    expect(byCode(judged("access-copy", none), "coding-history-mismatch")).toEqual([]);
  });
});

describe("metadata rules in custom profiles (schema-validated)", () => {
  const base = { name: "house-masters" };

  it("accepts bext, INFO and iXML fields and rules with them", async () => {
    const profile = validateProfile({ ...base, metadata: { required: ["bext.Originator", "INFO.ICOP", "iXML"], loudnessToleranceLu: null } }, "house.json");
    expect(profile.metadata).toEqual({ required: ["bext.Originator", "INFO.ICOP", "iXML"], recommended: [], formats: true, codingHistory: true, loudnessToleranceLu: null });
    const file = await metadataOf({ bext: GOOD_BEXT });
    const found = judge(profile, { format: file.format, metrics: null, findings: [], error: null, metadata: file.metadata }).findings;
    expect(found.map((f) => f.message)).toEqual(["required metadata missing or empty: INFO.ICOP, iXML"]);
  });

  it("a bad field name is an error that names the field", () => {
    expect(() => validateProfile({ ...base, metadata: { required: ["bext.Originator", "bext.Producer"] } }, "house.json")).toThrow(
      /metadata\.required\[1\]: expected a bext field/,
    );
    const e = (() => {
      try {
        validateProfile({ ...base, metadata: { recommended: ["INFO.iarl"] } }, "house.json");
      } catch (err) {
        return err;
      }
    })();
    expect(e).toBeInstanceOf(ProfileError);
    expect((e as ProfileError).field).toBe("metadata.recommended[0]");
  });

  it("rejects unknown rule keys, negative tolerances and a field both required and recommended", () => {
    expect(() => validateProfile({ ...base, metadata: { requried: [] } }, "h.json")).toThrow(/metadata\.requried: unknown field/);
    expect(() => validateProfile({ ...base, metadata: { loudnessToleranceLu: -1 } }, "h.json")).toThrow(/metadata\.loudnessToleranceLu/);
    expect(() => validateProfile({ ...base, metadata: { required: ["bext.UMID"], recommended: ["bext.UMID"] } }, "h.json")).toThrow(
      /metadata\.recommended\[0\]: bext\.UMID is already required/,
    );
  });

  it("the severity map can soften or silence a metadata code", async () => {
    const profile = validateProfile({ ...base, severities: { "metadata-missing": "warn", "metadata-format": "off" }, metadata: { required: ["bext.UMID"] } }, "h.json");
    const file = await metadataOf({ bext: { ...GOOD_BEXT, umid: undefined, originationDate: "yesterday" } });
    const found = judge(profile, { format: file.format, metrics: null, findings: [], error: null, metadata: file.metadata }).findings;
    expect(found.map((f) => [f.code, f.severity])).toEqual([["metadata-missing", "warn"]]);
  });

  it("a profile without metadata rules does not judge metadata", async () => {
    const profile = validateProfile(base, "h.json");
    const file = await metadataOf({ bext: { ...GOOD_BEXT, originationDate: "yesterday" } });
    expect(judge(profile, { format: file.format, metrics: null, findings: [], error: null, metadata: file.metadata }).findings).toEqual([]);
  });
});

describe("containers without bext or LIST/INFO", () => {
  it("asks a FLAC or AIFF master for no BWF fields, while a RIFF file without them misses them", async () => {
    const bare = await metadataOf({});
    const riff = judged("preservation-master", bare).map((f) => f.code);
    expect(riff).toContain("metadata-missing");
    for (const container of ["flac", "aiff", "aifc"] as const) {
      const codes = judged("preservation-master", { metadata: {}, format: { ...bare.format, container } }).map((f) => f.code);
      expect(codes.filter((c) => c.startsWith("metadata-")), container).toEqual([]);
    }
  });
});
