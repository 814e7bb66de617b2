/**
 * PREMIS 3.0 XML (Library of Congress, PREMIS Data Dictionary 3.0) for an auditor: one file object per audio
 * file with its SHA-256 fixity, one event per scan ("fixity check" against the previous scan of the same path,
 * or "message digest calculation" for a first scan) and per `tidemark verify --upload` check, and the agents
 * behind them: the scanning tool, the uploading user and, for verify checks, the API token used.
 * Pure: takes plain rows, returns the document; premisData.ts reads them from the database.
 */
import { create } from "xmlbuilder2";
import type { XMLBuilder } from "xmlbuilder2/lib/interfaces.js";

export const PREMIS_NS = "http://www.loc.gov/premis/v3";
const XSI_NS = "http://www.w3.org/2001/XMLSchema-instance";

export interface PremisObject {
  fileResultId: number;
  path: string;
  sizeBytes: number;
  sha256: string | null;
  /** e.g. "bwf", "wav", "rf64"; null when unreadable. */
  container: string | null;
}

export interface PremisAgent {
  /** Unique within the document, e.g. "user:3", "token:ab12", "tool:tidemark/1.4.0". */
  id: string;
  name: string;
  /** PREMIS agentType: "software", "person". */
  type: string;
  version?: string | null;
  note?: string | null;
}

export interface PremisEvent {
  id: string;
  type: "fixity check" | "message digest calculation";
  at: Date;
  detail: string;
  /** "pass" / "fail" for fixity checks, "success" for a digest calculation. */
  outcome: string;
  outcomeNote: string;
  /** Agent id and its PREMIS role ("executing program", "implementer", "authorizer"). */
  agents: { id: string; role: string }[];
  /** fileResultId of the object the event is about, or null for a file no scan recorded (e.g. a moved path). */
  objectId: number | null;
}

export interface PremisDocument {
  objects: PremisObject[];
  events: PremisEvent[];
  agents: PremisAgent[];
}

/**
 * Common practice for the PREMIS format name of the containers Tidemark reads (the names format registries
 * such as PRONOM and the Library of Congress format descriptions use, from memory).
 */
const FORMAT_NAMES: Record<string, string> = { wav: "WAVE", bwf: "Broadcast WAVE", rf64: "RF64", flac: "FLAC", aiff: "AIFF", aifc: "AIFF-C" };

const LOCAL = "local";
const objectIdValue = (fileResultId: number): string => `tidemark:file-result:${fileResultId}`;

function identifier(parent: XMLBuilder, element: string, type: string, value: string): void {
  const id = parent.ele(element);
  id.ele(`${element}Type`).txt(type);
  id.ele(`${element}Value`).txt(value);
}

export function premisXml(doc: PremisDocument): string {
  const root = create({ version: "1.0", encoding: "UTF-8" }).ele(PREMIS_NS, "premis", { version: "3.0" }).att("xmlns:xsi", XSI_NS);

  const eventsByObject = new Map<number, string[]>();
  for (const e of doc.events) {
    if (e.objectId === null) continue;
    const list = eventsByObject.get(e.objectId) ?? [];
    list.push(e.id);
    eventsByObject.set(e.objectId, list);
  }

  for (const o of doc.objects) {
    const obj = root.ele("object").att(XSI_NS, "xsi:type", "file");
    identifier(obj, "objectIdentifier", LOCAL, objectIdValue(o.fileResultId));
    const ch = obj.ele("objectCharacteristics");
    ch.ele("compositionLevel").txt("0");
    if (o.sha256) {
      const fx = ch.ele("fixity");
      fx.ele("messageDigestAlgorithm").txt("SHA-256");
      fx.ele("messageDigest").txt(o.sha256);
      fx.ele("messageDigestOriginator").txt("Tidemark");
    }
    ch.ele("size").txt(String(o.sizeBytes));
    ch.ele("format").ele("formatDesignation").ele("formatName").txt(o.container ? (FORMAT_NAMES[o.container] ?? o.container) : "unknown (unreadable)");
    obj.ele("originalName").txt(o.path);
    for (const eventId of eventsByObject.get(o.fileResultId) ?? []) identifier(obj, "linkingEventIdentifier", LOCAL, eventId);
  }

  for (const e of doc.events) {
    const ev = root.ele("event");
    identifier(ev, "eventIdentifier", LOCAL, e.id);
    ev.ele("eventType").txt(e.type);
    ev.ele("eventDateTime").txt(e.at.toISOString());
    ev.ele("eventDetailInformation").ele("eventDetail").txt(e.detail);
    const out = ev.ele("eventOutcomeInformation");
    out.ele("eventOutcome").txt(e.outcome);
    out.ele("eventOutcomeDetail").ele("eventOutcomeDetailNote").txt(e.outcomeNote);
    for (const a of e.agents) {
      const link = ev.ele("linkingAgentIdentifier");
      link.ele("linkingAgentIdentifierType").txt(LOCAL);
      link.ele("linkingAgentIdentifierValue").txt(a.id);
      link.ele("linkingAgentRole").txt(a.role);
    }
    if (e.objectId !== null) identifier(ev, "linkingObjectIdentifier", LOCAL, objectIdValue(e.objectId));
  }

  for (const a of doc.agents) {
    const ag = root.ele("agent");
    identifier(ag, "agentIdentifier", LOCAL, a.id);
    ag.ele("agentName").txt(a.name);
    ag.ele("agentType").txt(a.type);
    if (a.version) ag.ele("agentVersion").txt(a.version);
    if (a.note) ag.ele("agentNote").txt(a.note);
  }
  return root.end({ prettyPrint: true });
}
