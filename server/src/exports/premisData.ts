/**
 * Reads what a PREMIS export holds (premisXml.ts) for one batch or one whole collection.
 * - batch: the batch's files as objects; one event per file for this scan; every verify check of those
 *   paths in the collection.
 * - collection: the latest scan of each path as its object; one event for every scan of every path; every
 *   verify check of the collection.
 * A scan of a path scanned before is a "fixity check" against the earlier SHA-256; a first scan is a
 * "message digest calculation".
 */
import { Op } from "sequelize";
import { ApiToken, Batch, FileResult, FixityCheck, User, type Collection } from "../models/index.ts";
import type { PremisAgent, PremisDocument, PremisEvent, PremisObject } from "./premisXml.ts";

const toolAgentId = (b: Batch): string => `tool:${b.toolName}/${b.toolVersion}`;
const userAgentId = (id: number): string => `user:${id}`;
const VERIFY_AGENT_ID = "tool:tidemark verify";

class Agents {
  private readonly byId = new Map<string, PremisAgent>();
  add(agent: PremisAgent): string {
    if (!this.byId.has(agent.id)) this.byId.set(agent.id, agent);
    return agent.id;
  }
  list(): PremisAgent[] {
    return [...this.byId.values()];
  }
}

function userAgent(agents: Agents, user: User | undefined, id: number): string {
  return agents.add({ id: userAgentId(id), name: user ? `${user.name} <${user.email}>` : `user ${id}`, type: "person" });
}

function objectOf(f: FileResult): PremisObject {
  return { fileResultId: f.id, path: f.path, sizeBytes: Number(f.sizeBytes), sha256: f.sha256, container: f.format?.container ?? null };
}

function scanEvent(f: FileResult, batch: Batch, previousSha: Map<number, string | null>, agents: Agents, objectId: number): PremisEvent | null {
  const tool = agents.add({ id: toolAgentId(batch), name: batch.toolName, type: "software", version: batch.toolVersion });
  const uploader = userAgent(agents, batch.uploader, batch.uploaderId);
  const base = {
    id: `scan:${f.id}`,
    at: batch.finishedAt,
    agents: [
      { id: tool, role: "executing program" },
      { id: uploader, role: "implementer" },
    ],
    objectId,
  };
  const detail = `${batch.toolName} ${batch.toolVersion} scan, batch ${batch.batchKey} (profile ${batch.profileName})`;
  if (f.previousId === null) {
    if (!f.sha256) return null;
    return { ...base, type: "message digest calculation", detail, outcome: "success", outcomeNote: `SHA-256 ${f.sha256} recorded at first scan of ${f.path}` };
  }
  const before = previousSha.get(f.previousId) ?? null;
  const same = f.sha256 !== null && f.sha256 === before;
  return {
    ...base,
    type: "fixity check",
    detail: `${detail}: SHA-256 compared with the previous scan of the same path`,
    outcome: same ? "pass" : "fail",
    outcomeNote: same ? `unchanged: SHA-256 ${f.sha256}` : `changed: SHA-256 was ${before ?? "not recorded"}, now ${f.sha256 ?? "not readable"}`,
  };
}

function verifyEvent(c: FixityCheck, agents: Agents, objectId: number | null): PremisEvent {
  const tool = agents.add({ id: VERIFY_AGENT_ID, name: "tidemark verify --upload", type: "software" });
  const eventAgents = [
    { id: tool, role: "executing program" },
    { id: userAgent(agents, c.user, c.userId), role: "implementer" },
  ];
  if (c.tokenId) {
    const tokenId = agents.add({
      id: `token:${c.tokenId}`,
      name: c.token ? `API token "${c.token.name}"` : `API token ${c.tokenId}`,
      type: "software",
      note: `credential of user ${c.userId}`,
    });
    eventAgents.push({ id: tokenId, role: "authorizer" });
  }
  const moved = c.movedTo ? ` (now at ${c.movedTo})` : "";
  return {
    id: `fixity-check:${c.id}`,
    type: "fixity check",
    at: c.checkedAt,
    detail: `tidemark verify of ${c.path} against its recorded SHA-256`,
    outcome: c.outcome === "unchanged" || c.outcome === "moved" ? "pass" : "fail",
    outcomeNote: `${c.outcome}${moved}: expected ${c.expectedSha256 ?? "none"}, found ${c.actualSha256 ?? "none"}${c.detail ? `; ${c.detail}` : ""}`,
    agents: eventAgents,
    objectId,
  };
}

async function previousShas(files: FileResult[]): Promise<Map<number, string | null>> {
  const ids = files.map((f) => f.previousId).filter((id): id is number => id !== null);
  if (ids.length === 0) return new Map();
  const rows = await FileResult.findAll({ where: { id: ids }, attributes: ["id", "sha256"] });
  return new Map(rows.map((r) => [r.id, r.sha256]));
}

const checkIncludes = [
  { model: User, as: "user" },
  { model: ApiToken, as: "token" },
];

export async function premisForBatch(batch: Batch): Promise<PremisDocument> {
  const files = await FileResult.findAll({ where: { batchId: batch.id }, order: [["id", "ASC"]] });
  const [previous, checks] = await Promise.all([
    previousShas(files),
    FixityCheck.findAll({ where: { collectionId: batch.collectionId, path: files.map((f) => f.path) }, include: checkIncludes, order: [["checkedAt", "ASC"], ["id", "ASC"]] }),
  ]);
  const agents = new Agents();
  const byPath = new Map(files.map((f) => [f.path, f.id]));
  const events: PremisEvent[] = [];
  for (const f of files) {
    const e = scanEvent(f, batch, previous, agents, f.id);
    if (e) events.push(e);
  }
  for (const c of checks) events.push(verifyEvent(c, agents, byPath.get(c.path) ?? null));
  return { objects: files.map(objectOf), events, agents: agents.list() };
}

export async function premisForCollection(collection: Collection): Promise<PremisDocument> {
  const files = await FileResult.findAll({ where: { collectionId: collection.id }, order: [["id", "ASC"]] });
  const batchIds = [...new Set(files.map((f) => f.batchId))];
  const [batches, previous, checks] = await Promise.all([
    Batch.findAll({ where: { id: { [Op.in]: batchIds } }, include: [{ model: User, as: "uploader" }] }),
    previousShas(files),
    FixityCheck.findAll({ where: { collectionId: collection.id }, include: checkIncludes, order: [["checkedAt", "ASC"], ["id", "ASC"]] }),
  ]);
  const batchById = new Map(batches.map((b) => [b.id, b]));
  // The latest scan of each path is its object; earlier scans are events about the same object.
  const latest = new Map<string, FileResult>();
  for (const f of files) {
    const seen = latest.get(f.path);
    const fb = batchById.get(f.batchId)!;
    if (!seen || batchById.get(seen.batchId)!.finishedAt <= fb.finishedAt) latest.set(f.path, f);
  }
  const agents = new Agents();
  const events: PremisEvent[] = [];
  const scans = [...files].sort((a, b) => batchById.get(a.batchId)!.finishedAt.getTime() - batchById.get(b.batchId)!.finishedAt.getTime() || a.id - b.id);
  for (const f of scans) {
    const e = scanEvent(f, batchById.get(f.batchId)!, previous, agents, latest.get(f.path)!.id);
    if (e) events.push(e);
  }
  for (const c of checks) events.push(verifyEvent(c, agents, latest.get(c.path)?.id ?? null));
  const objects = [...latest.values()].sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0)).map(objectOf);
  return { objects, events, agents: agents.list() };
}
