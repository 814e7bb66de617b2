/**
 * The PREMIS format name of every container Tidemark reads (issue #17 added FLAC, AIFF and AIFF-C): the names
 * format registries use (PRONOM, the Library of Congress format descriptions; from memory), each document
 * valid against the PREMIS 3.0 XML schema by Debian's xmllint (../shared/reference/premis-v3-0.xsd) and read
 * back with fast-xml-parser (an independent parser). Pure: premisXml takes plain rows, no database.
 */
import { XMLParser } from "fast-xml-parser";
import { describe, expect, it } from "vitest";
import { premisXml } from "../../server/src/exports/premisXml.ts";
import { CONTAINERS } from "../../shared/src/types/codes.ts";
import { validateWithXmllint } from "../helpers/xmlSchema.ts";

const EXPECTED: Record<(typeof CONTAINERS)[number], string> = {
  wav: "WAVE",
  bwf: "Broadcast WAVE",
  rf64: "RF64",
  flac: "FLAC",
  aiff: "AIFF",
  aifc: "AIFF-C",
};

describe("PREMIS format names", () => {
  it("names every container, and the document validates", () => {
    const objects = CONTAINERS.map((container, i) => ({
      fileResultId: i + 1,
      path: `reel-${i + 1}.${container}`,
      sizeBytes: 1000 + i,
      sha256: "ab".repeat(32),
      container,
    }));
    const xml = premisXml({ objects, events: [], agents: [] });
    const check = validateWithXmllint(xml, "premis-v3-0.xsd");
    expect(check.valid, check.output).toBe(true);
    const parsed = new XMLParser({ removeNSPrefix: true }).parse(xml) as { premis: { object: { originalName: string; objectCharacteristics: { format: { formatDesignation: { formatName: string } } } }[] } };
    const names = Object.fromEntries(parsed.premis.object.map((o) => [o.originalName, o.objectCharacteristics.format.formatDesignation.formatName]));
    for (const [i, container] of CONTAINERS.entries()) expect(names[`reel-${i + 1}.${container}`], container).toBe(EXPECTED[container]);
  });
});
