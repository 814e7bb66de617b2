import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import {
  BUILTIN_PROFILES,
  canonicalProfileJson,
  findBuiltinProfile,
  judge,
  parseProfileJson,
  ProfileError,
  profileSchema,
  resolveAnalysisSettings,
  type Profile,
} from "../../shared/src/profiles/index.ts";
import { DEFAULT_ANALYSIS_SETTINGS } from "../../shared/src/types/settings.ts";
import type { AudioFormat, FileMetrics, Finding } from "../../shared/src/types/report.ts";

function builtin(name: string): Profile {
  const p = findBuiltinProfile(name);
  if (!p) throw new Error(`no built-in profile ${name}`);
  return p;
}

const format = (o: Partial<AudioFormat> = {}): AudioFormat => ({
  container: "wav",
  encoding: "pcm",
  sampleRateHz: 48000,
  bitDepth: 24,
  channels: 2,
  durationSeconds: 10,
  ...o,
});

function metrics(o: Partial<FileMetrics> = {}, dcPercent: number[] = [0, 0]): FileMetrics {
  return {
    samplePeakDbfs: -3,
    truePeakDbtp: -2.5,
    rmsDbfs: -20,
    integratedLufs: -23,
    loudnessRangeLu: 5,
    maxMomentaryLufs: -18,
    maxShortTermLufs: -20,
    clippedSamples: 0,
    clipEvents: 0,
    dcOffsetPercent: Math.max(...dcPercent),
    bandwidthHz: 20000,
    dominantFrequencyHz: 1000,
    noiseFloorDbfs: -80,
    stereoCorrelation: 0.5,
    effectiveBitDepth: 24,
    bands: { octave: [], third: [] },
    channels: dcPercent.map((dc) => ({ samplePeakDbfs: -3, truePeakDbtp: -2.5, rmsDbfs: -20, dcOffsetPercent: dc, clippedSamples: 0 })),
    ...o,
  };
}

const finding = (code: Finding["code"], severity: Finding["severity"] = "warn"): Finding => ({
  code,
  severity,
  channel: 0,
  startSeconds: 1.5,
  endSeconds: 1.6,
  message: `${code} found`,
});

const codes = (fs: Finding[]): string[] => fs.map((f) => `${f.code}:${f.severity}`);

describe("built-in profiles", () => {
  it("are the three named in the product notes (../shared/README.md) and validate against the profile schema", () => {
    expect(BUILTIN_PROFILES.map((p) => p.name)).toEqual(["preservation-master", "access-copy", "broadcast-loudness"]);
    for (const p of BUILTIN_PROFILES) {
      // What `tidemark profiles NAME` prints must be a valid starting point for a custom profile.
      expect(parseProfileJson(JSON.stringify(p), `${p.name}.json`)).toEqual(p);
      expect(p.sources.length).toBeGreaterThan(0);
    }
  });

  it("are stored in their parsed form: the profile schema's parse (defaults filled in) changes none of them", () => {
    // A scan uses them without loading zod (issue #22), so nothing else would fill in a default left out.
    for (const p of BUILTIN_PROFILES) expect(profileSchema.parse(structuredClone(p)), p.name).toStrictEqual(p);
    // The check sees a default left out: without its sources (default []) the parse adds them back.
    const access = structuredClone(findBuiltinProfile("access-copy") as Profile);
    const withoutSources: Record<string, unknown> = { ...access };
    delete withoutSources.sources;
    expect(profileSchema.parse(withoutSources)).not.toStrictEqual(withoutSources);
  });

  it("cite in their user-visible sources only what the project ships: README sections, no recall marks", () => {
    const readme = readFileSync(new URL("../../README.md", import.meta.url), "utf8");
    const headings = new Set([...readme.matchAll(/^#{2,4} (.+)$/gm)].map((m) => m[1].trim()));
    let readmeCitations = 0;
    for (const source of BUILTIN_PROFILES.flatMap((p) => p.sources)) {
      expect(source).not.toMatch(/from memory|shared\/README/i);
      const cited = /^README › ([^:]+):/.exec(source);
      if (cited) {
        expect(headings.has(cited[1]), `README has a section "${cited[1]}"`).toBe(true);
        readmeCitations++;
      }
    }
    expect(readmeCitations).toBeGreaterThan(0);
  });
});

describe("broadcast-loudness: EBU R 128 (2020)", () => {
  const p = builtin("broadcast-loudness");
  // EBU R 128 (2020): target −23.0 LUFS, ±0.5 LU tolerance; the product notes (../shared/README.md): warn up to ±1 LU.
  it.each([
    [-23.0, "pass"],
    [-23.45, "pass"],
    [-22.55, "pass"],
    [-23.6, "warn"],
    [-22.1, "warn"],
    [-24.2, "fail"],
    [-21.5, "fail"],
  ] as const)("integrated %d LUFS gives %s", (lufs, verdict) => {
    const j = judge(p, { format: format(), metrics: metrics({ integratedLufs: lufs }), findings: [], error: null });
    expect(j.verdict).toBe(verdict);
    if (verdict !== "pass") {
      expect(j.findings.map((f) => f.code)).toEqual(["loudness-off-target"]);
      expect(j.findings[0].message).toContain(`${Math.abs(lufs + 23).toFixed(1)} LU`);
    }
  });

  // EBU R 128 (2020): maximum permitted true peak −1 dBTP.
  it.each([
    [-1.0, "pass"],
    [-1.5, "pass"],
    [-0.9, "fail"],
    [0.4, "fail"],
  ] as const)("true peak %d dBTP gives %s", (dbtp, verdict) => {
    const m = metrics({ truePeakDbtp: dbtp });
    m.channels[1].truePeakDbtp = dbtp;
    const j = judge(p, { format: format(), metrics: m, findings: [], error: null });
    expect(j.verdict).toBe(verdict);
    if (verdict === "fail") {
      expect(j.findings[0]).toMatchObject({ code: "true-peak-over", severity: "fail", channel: 1 });
    }
  });

  it("fails a file whose loudness cannot be measured (gated out, BS.1770-4 absolute gate)", () => {
    const j = judge(p, { format: format(), metrics: metrics({ integratedLufs: null }), findings: [], error: null });
    expect(j.verdict).toBe("fail");
    expect(j.findings[0].message).toMatch(/not measurable/);
  });

  it("replaces an analyser's own true-peak-over with the profile's threshold", () => {
    const j = judge(p, { format: format(), metrics: metrics({ truePeakDbtp: -3 }), findings: [finding("true-peak-over", "fail")], error: null });
    expect(j.verdict).toBe("pass");
  });
});

describe("preservation-master: IASA TC-04 format demands", () => {
  const p = builtin("preservation-master");
  // IASA TC-04 (from memory): 48 kHz / 24-bit minimum, 96 kHz recommended.
  it.each([
    [{ sampleRateHz: 48000, bitDepth: 24 }, 0],
    [{ sampleRateHz: 96000, bitDepth: 24 }, 0],
    [{ sampleRateHz: 192000, bitDepth: 32 }, 0],
    [{ sampleRateHz: 44100, bitDepth: 24 }, 1],
    [{ sampleRateHz: 48000, bitDepth: 16 }, 1],
    [{ sampleRateHz: 44100, bitDepth: 16 }, 2],
    [{ encoding: "float", bitDepth: 32 }, 1],
  ] as const)("%o gives %i format-mismatch finding(s)", (f, n) => {
    const j = judge(p, { format: format(f), metrics: metrics(), findings: [], error: null });
    expect(j.findings.filter((x) => x.code === "format-mismatch")).toHaveLength(n);
    expect(j.verdict).toBe(n > 0 ? "fail" : "pass");
  });

  it("names the demand in the message", () => {
    const j = judge(p, { format: format({ sampleRateHz: 44100 }), metrics: metrics(), findings: [], error: null });
    expect(j.findings[0].message).toBe("sample rate 44100 Hz, expected at least 48000 Hz");
  });

  // The product notes (../shared/README.md): |DC| < 0.1 % FS warn / 1 % fail.
  it.each([
    [[0.05, 0.0], "pass", []],
    [[0.0, 0.2], "warn", [1]],
    [[1.5, 0.3], "fail", [0, 1]],
  ] as const)("DC offsets %o %% give %s", (dc, verdict, channels) => {
    const j = judge(p, { format: format(), metrics: metrics({}, [...dc]), findings: [], error: null });
    expect(j.verdict).toBe(verdict);
    expect(j.findings.filter((f) => f.code === "dc-offset").map((f) => f.channel)).toEqual(channels);
  });

  it("makes clipping and padded bit depth failures whatever severity the analyser gave", () => {
    const j = judge(p, { format: format(), metrics: metrics(), findings: [finding("clipping", "warn"), finding("padded-bit-depth", "info")], error: null });
    expect(codes(j.findings)).toEqual(["clipping:fail", "padded-bit-depth:fail"]);
    expect(j.verdict).toBe("fail");
  });

  it("sets no loudness target: masters are not normalised", () => {
    const j = judge(p, { format: format(), metrics: metrics({ integratedLufs: -40 }), findings: [], error: null });
    expect(j.verdict).toBe("pass");
  });
});

describe("access-copy", () => {
  const p = builtin("access-copy");
  it("accepts 44.1 kHz / 16-bit (Red Book, common practice) and rejects 32 kHz", () => {
    expect(judge(p, { format: format({ sampleRateHz: 44100, bitDepth: 16 }), metrics: metrics(), findings: [], error: null }).verdict).toBe("pass");
    const j = judge(p, { format: format({ sampleRateHz: 32000, bitDepth: 16 }), metrics: metrics(), findings: [], error: null });
    expect(codes(j.findings)).toEqual(["format-mismatch:fail"]);
  });

  it("demotes padded bit depth to info (an access copy may come from a 24-bit master)", () => {
    const j = judge(p, { format: format(), metrics: metrics(), findings: [finding("padded-bit-depth", "warn")], error: null });
    expect(j).toEqual({ verdict: "pass", findings: [expect.objectContaining({ code: "padded-bit-depth", severity: "info" })] });
  });

  it("gives verdict error, and no threshold findings, to a file that could not be read", () => {
    const error = { code: "not-riff", message: "expected a RIFF header, got 'OggS'" };
    const j = judge(p, { format: null, metrics: null, findings: [finding("unreadable", "fail")], error });
    expect(j.verdict).toBe("error");
    expect(codes(j.findings)).toEqual(["unreadable:fail"]);
  });
});

describe("custom profile files", () => {
  const valid = {
    name: "harbourside-reels",
    description: "Lighthouse Choir Reels transfers",
    format: { sampleRatesHz: [96000], channels: [2] },
    thresholds: { truePeakDbtp: { warn: -2, fail: -1 } },
    severities: { hum: "fail", "dual-mono": "off" },
    settings: { clipRunSamples: 5, spectrogram: { width: 800 } },
  };

  it("validates and fills defaults", () => {
    const p = parseProfileJson(JSON.stringify(valid), "reels.json");
    expect(p.sources).toEqual([]);
    expect(p.severities.hum).toBe("fail");
  });

  it("merges setting overrides over DEFAULT_ANALYSIS_SETTINGS, nested spectrogram fields one by one", () => {
    const s = resolveAnalysisSettings(parseProfileJson(JSON.stringify(valid), "reels.json"));
    expect(s.clipRunSamples).toBe(5);
    expect(s.spectrogram).toEqual({ ...DEFAULT_ANALYSIS_SETTINGS.spectrogram, width: 800 });
    expect(s.silenceThresholdDbfs).toBe(DEFAULT_ANALYSIS_SETTINGS.silenceThresholdDbfs);
    expect(resolveAnalysisSettings(builtin("access-copy"))).toEqual(DEFAULT_ANALYSIS_SETTINGS);
  });

  it("warns between the warn and fail limits and drops codes set to off", () => {
    const p = parseProfileJson(JSON.stringify(valid), "reels.json");
    const j = judge(p, { format: format({ sampleRateHz: 96000 }), metrics: metrics({ truePeakDbtp: -1.5 }), findings: [finding("dual-mono", "info"), finding("hum")], error: null });
    expect(codes(j.findings)).toEqual(["true-peak-over:warn", "hum:fail"]);
    expect(j.verdict).toBe("fail");
  });

  it.each([
    [{ ...valid, thresholds: { truePeakDbtp: { fail: "-1" } } }, "thresholds.truePeakDbtp.fail", /expected number, received string/],
    [{ ...valid, thresholds: { truePeakDbtP: { fail: -1 } } }, "thresholds.truePeakDbtP", /unknown field/],
    [{ ...valid, severities: { humm: "warn" } }, "severities.humm", /unknown field/],
    [{ ...valid, severities: { hum: "loud" } }, "severities.hum", /expected one of/],
    [{ ...valid, format: { sampleRatesHz: [44100, -1] } }, "format.sampleRatesHz[1]", /expected number to be >0/],
    [{ ...valid, settings: { fftSize: 1000 } }, "settings.fftSize", /power of two/],
    [{ ...valid, thresholds: { dcOffsetPercent: { warn: 2, fail: 1 } } }, "thresholds.dcOffsetPercent", /warn must not be above fail/],
    [{ ...valid, name: "Harbourside Reels" }, "name", /lower-case/],
    [{ description: "no name" }, "name", /expected string, received undefined/],
  ])("a bad field is named in the error (%#)", (value, field, why) => {
    let caught: unknown;
    try {
      parseProfileJson(JSON.stringify(value), "reels.json");
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(ProfileError);
    const err = caught as ProfileError;
    expect(err.field).toBe(field);
    expect(err.message).toContain(`bad profile reels.json: ${field}: `);
    expect(err.message).toMatch(why);
    expect(err.message).not.toContain("\n");
  });

  it("says when the file is not JSON or not an object", () => {
    expect(() => parseProfileJson("{ name: 1", "broken.json")).toThrow(/^bad profile broken\.json: expected JSON, /);
    expect(() => parseProfileJson("[1,2]", "list.json")).toThrow("bad profile list.json: expected a JSON object, got an array");
  });

  it("has a canonical text independent of key order and of $schema", () => {
    const a = parseProfileJson(JSON.stringify(valid), "a.json");
    const reordered = Object.fromEntries(Object.entries({ ...valid, $schema: "x" }).reverse());
    const b = parseProfileJson(JSON.stringify(reordered), "b.json");
    expect(canonicalProfileJson(b)).toBe(canonicalProfileJson(a));
    const c = parseProfileJson(JSON.stringify({ ...valid, settings: { clipRunSamples: 6 } }), "c.json");
    expect(canonicalProfileJson(c)).not.toBe(canonicalProfileJson(a));
  });
});
