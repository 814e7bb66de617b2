import { readFileSync } from "node:fs";
import { Ajv2020 } from "ajv/dist/2020.js";
import { parse as parseCsv } from "csv-parse/sync";
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { describe, expect, it } from "vitest";
import {
  assembleReport,
  CSV_COLUMNS,
  escapeXml,
  reportToCsv,
  reportToJson,
  reportToJunitXml,
  reportToTable,
  summarizeVerdicts,
} from "../../shared/src/report/index.ts";
import { reportJsonSchemaText } from "../../shared/src/report/reportJsonSchema.ts";
import type { FileReport, Finding, ScanReport } from "../../shared/src/types/report.ts";
import { validateWithXmllint } from "../helpers/xmlSchema.ts";

const schemaPath = new URL("../../shared/schema/report.schema.json", import.meta.url);

const finding = (code: Finding["code"], severity: Finding["severity"], startSeconds: number | null = null): Finding => ({
  code,
  severity,
  channel: startSeconds === null ? null : 0,
  startSeconds,
  endSeconds: startSeconds === null ? null : startSeconds + 0.25,
  message: `${code} <at> "here" & 'there'`,
});

function file(path: string, verdict: FileReport["verdict"], findings: Finding[] = []): FileReport {
  const readable = verdict !== "error";
  return {
    path,
    sizeBytes: 960_044,
    sha256: readable ? "a".repeat(64) : null,
    format: readable ? { container: "bwf", encoding: "pcm", sampleRateHz: 48000, bitDepth: 24, channels: 2, durationSeconds: 3.333 } : null,
    metadata: readable ? { bext: { description: "Ferry Terminal Interviews 1978, tape 4", originator: "Harbourside", originatorReference: "HSA-1978-004", originationDate: "2026-01-15", originationTime: "10:00:00", timeReference: 0, version: 1, umid: null, codingHistory: "A=ANALOGUE,M=mono,T=Revox A77\r\n" } } : {},
    metrics: readable
      ? {
          samplePeakDbfs: -0.5,
          truePeakDbtp: -0.2,
          rmsDbfs: -18.25,
          integratedLufs: -21.7,
          loudnessRangeLu: 6.1,
          maxMomentaryLufs: -15,
          maxShortTermLufs: -17,
          clippedSamples: 0,
          clipEvents: 0,
          dcOffsetPercent: 0.01,
          bandwidthHz: 19500,
          dominantFrequencyHz: 440,
          // Quiet values arrive as −Infinity from the analysers and must reach JSON as null.
          noiseFloorDbfs: -Infinity as unknown as number,
          stereoCorrelation: 0.7,
          effectiveBitDepth: 24,
          bands: { octave: [{ centerHz: 1000, db: -20 }], third: [{ centerHz: 1000, db: -24 }] },
          channels: [
            { samplePeakDbfs: -0.5, truePeakDbtp: -0.2, rmsDbfs: -18.25, dcOffsetPercent: 0.01, clippedSamples: 0 },
            { samplePeakDbfs: -0.7, truePeakDbtp: -0.4, rmsDbfs: -19, dcOffsetPercent: 0.0, clippedSamples: 0 },
          ],
        }
      : null,
    findings,
    verdict,
    error: readable ? null : { code: "not-riff", message: "expected 'RIFF' or 'RF64' at byte 0, got 'OggS'" },
    spectrogram: readable ? `spectrograms/${path}.png` : null,
  };
}

function sampleReport(): ScanReport {
  return assembleReport(
    {
      tool: { name: "tidemark", version: "0.1.0" },
      profile: { name: "access-copy", hash: "b".repeat(64) },
      startedAt: "2026-01-15T10:00:00.000Z",
      finishedAt: "2026-01-15T10:00:04.500Z",
    },
    [
      file("Lighthouse Choir Reels/reel 2, side \"B\".wav", "fail", [finding("clipping", "fail", 1.25), finding("clipping", "fail", 2), finding("hum", "warn")]),
      file("Ferry Terminal Interviews 1978/tape-04.bwf", "pass"),
      file("Ferry Terminal Interviews 1978/notes<&>.wav", "error", [finding("unreadable", "fail")]),
      file("Ferry Terminal Interviews 1978/tape-05.bwf", "warn", [finding("band-limited", "warn")]),
    ],
  );
}

describe("report assembly", () => {
  it("sorts files by path in code-point order and counts verdicts", () => {
    const r = sampleReport();
    expect(r.files.map((f) => f.path)).toEqual([
      "Ferry Terminal Interviews 1978/notes<&>.wav",
      "Ferry Terminal Interviews 1978/tape-04.bwf",
      "Ferry Terminal Interviews 1978/tape-05.bwf",
      "Lighthouse Choir Reels/reel 2, side \"B\".wav",
    ]);
    expect(r.summary).toEqual({ files: 4, pass: 1, warn: 1, fail: 1, error: 1 });
    expect(summarizeVerdicts([])).toEqual({ files: 0, pass: 0, warn: 0, fail: 0, error: 0 });
  });
});

describe("JSON report", () => {
  const ajv = new Ajv2020({ allErrors: true, strict: true });
  // ajv ships no "date-time" checker without ajv-formats; the schema's own pattern does that job.
  ajv.addFormat("date-time", true);
  const validate = ajv.compile(JSON.parse(readFileSync(schemaPath, "utf8")));

  // JSON Schema 2020-12, checked by ajv (npm), an implementation independent of zod.
  it("validates with ajv against the committed shared/schema/report.schema.json", () => {
    const parsed = JSON.parse(reportToJson(sampleReport()));
    expect(validate(parsed), JSON.stringify(validate.errors)).toBe(true);
    expect(parsed.files[1].metrics.noiseFloorDbfs).toBeNull();
  });

  it("the schema rejects a report that breaks the contract", () => {
    const parsed = JSON.parse(reportToJson(sampleReport()));
    parsed.files[0].verdict = "maybe";
    delete parsed.summary.warn;
    expect(validate(parsed)).toBe(false);
    expect(validate.errors?.map((e) => e.instancePath)).toEqual(expect.arrayContaining(["/files/0/verdict", "/summary"]));
  });

  it("the committed schema is in sync with the zod schema (run scripts/generate-report-schema.ts)", () => {
    expect(readFileSync(schemaPath, "utf8")).toBe(reportJsonSchemaText());
  });
});

describe("CSV report", () => {
  // RFC 4180: CRLF records, quoted fields for commas, quotes and line breaks; parsed by csv-parse (npm).
  it("parses back with csv-parse: a header and one row a file, awkward paths intact", () => {
    const r = sampleReport();
    const rows = parseCsv(reportToCsv(r), { columns: true, record_delimiter: "\r\n" }) as Record<string, string>[];
    expect(rows).toHaveLength(r.files.length);
    expect(Object.keys(rows[0])).toEqual([...CSV_COLUMNS]);
    expect(rows.map((x) => x.path)).toEqual(r.files.map((f) => f.path));
    const clipped = rows[3];
    expect(clipped).toMatchObject({ verdict: "fail", fail_findings: "2", warn_findings: "1", finding_codes: "clipping;hum", sample_rate_hz: "48000" });
    expect(Number(clipped.integrated_lufs)).toBeCloseTo(-21.7, 6);
    expect(rows[0]).toMatchObject({ verdict: "error", error_code: "not-riff", sha256: "", integrated_lufs: "" });
  });

  it("writes quiet (−Infinity) values as empty cells", () => {
    const r = sampleReport();
    r.files[1].metrics!.integratedLufs = -Infinity;
    const rows = parseCsv(reportToCsv(r), { columns: true }) as Record<string, string>[];
    expect(rows[1].integrated_lufs).toBe("");
  });
});

describe("JUnit XML report", () => {
  const parser = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", isArray: (name) => ["testcase", "failure"].includes(name) });

  // JUnit XML as CI servers read it (common practice: testsuites > testsuite > testcase > failure|error);
  // well-formedness and values checked with fast-xml-parser (npm).
  it("is valid against the published JUnit schema, one failure per failed file listing its fail findings", () => {
    const xml = reportToJunitXml(sampleReport());
    expect(XMLValidator.validate(xml)).toBe(true);
    // Source: junit-10.xsd in ../shared/reference (the schema a widely used CI server imports), via Debian's xmllint.
    expect(validateWithXmllint(xml, "junit-10.xsd")).toMatchObject({ valid: true });
    const doc = parser.parse(xml);
    const suite = doc.testsuites.testsuite;
    expect(suite["@tests"]).toBe("4");
    // failures counts failed testcases (one file with two fail findings is one failure), errors unreadable files.
    expect(suite["@failures"]).toBe("1");
    expect(suite["@errors"]).toBe("1");
    expect(suite["@time"]).toBe("4.500");
    const cases = suite.testcase as Record<string, unknown>[];
    expect(cases.map((c) => c["@name"])).toEqual(sampleReport().files.map((f) => f.path));
    const clipped = cases[3];
    const failure = clipped.failure as Record<string, string>[];
    expect(failure).toHaveLength(1);
    expect(failure[0]["@type"]).toBe("clipping");
    expect(failure[0]["@message"]).toBe("2 findings failed the profile: clipping ×2");
    // Escaped text comes back as it was written, each finding with its time.
    expect(failure[0]["#text"]).toBe(`fail clipping (channel 1) at 1.250–1.500 s: clipping <at> "here" & 'there'\nfail clipping (channel 1) at 2.000–2.250 s: clipping <at> "here" & 'there'`);
    expect(clipped["system-out"]).toContain("warn hum");
    expect(cases[0].error).toMatchObject({ "@type": "not-riff" });
    expect(cases[0].failure).toBeUndefined();
    expect(cases[1].failure).toBeUndefined();
  });

  it("names the profile in its properties and counts warnings as failures with --fail-on warn", () => {
    const xml = reportToJunitXml(sampleReport(), { failOn: "warn" });
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", isArray: (name) => ["testcase", "failure", "property"].includes(name) }).parse(xml);
    const suite = doc.testsuites.testsuite;
    const props = Object.fromEntries((suite.properties.property as Record<string, string>[]).map((p) => [p["@name"], p["@value"]]));
    expect(props).toMatchObject({ profile: "access-copy", "fail-on": "warn" });
    // The warn file and the fail file (which also warns) fail.
    expect(suite["@failures"]).toBe("2");
  });

  it("makes one testsuite per scan root, each with its own counts", () => {
    const r = sampleReport();
    const xml = reportToJunitXml(r, { suites: [{ name: "day-1", prefix: r.files[0].path.split("/")[0] }, { name: "rest", prefix: "" }] });
    expect(validateWithXmllint(xml, "junit-10.xsd")).toMatchObject({ valid: true });
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", isArray: (name) => ["testsuite", "testcase"].includes(name) }).parse(xml);
    const suites = doc.testsuites.testsuite as Record<string, unknown>[];
    const total = suites.reduce((n, s) => n + Number(s["@tests"]), 0);
    expect(total).toBe(r.files.length);
    expect(doc.testsuites["@tests"]).toBe(String(r.files.length));
  });

  it("escapes the five XML specials and replaces characters XML 1.0 forbids (XML 1.0 §2.2)", () => {
    expect(escapeXml(`a<b>&"c"'d'`)).toBe("a&lt;b&gt;&amp;&quot;c&quot;&apos;d&apos;");
    const r = sampleReport();
    r.files[1].path = "tape\u0001\u001f.wav";
    const xml = reportToJunitXml(r);
    expect(XMLValidator.validate(xml)).toBe(true);
    expect(parser.parse(xml).testsuites.testsuite.testcase[1]["@name"]).toBe("tape\uFFFD\uFFFD.wav");
  });
});

describe("table report", () => {
  it("lists every file, its findings and the summary", () => {
    const r = sampleReport();
    const text = reportToTable(r);
    const lines = text.split("\n");
    expect(lines[0]).toMatch(/^VERDICT\s+PATH\s+FORMAT\s+LENGTH\s+LUFS\s+dBTP\s+FINDINGS$/);
    for (const f of r.files) expect(text).toContain(f.path);
    expect(text).toContain("fail: clipping ×2; warn: hum");
    expect(text).toContain("bwf 48k/24 2ch");
    expect(text).toContain("error not-riff: expected 'RIFF'");
    expect(text).toContain("4 file(s): 1 pass, 1 warn, 1 fail, 1 error  (profile access-copy)");
  });
});
