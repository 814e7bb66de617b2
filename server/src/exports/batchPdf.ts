/**
 * GET /api/exports/batches/:id.pdf: a printable batch report, set in the shipped Source Serif 4.
 * Page 1 on: the batch header and one table row per file. Then a section per file: SHA-256, findings with
 * their place in the audio, the review trail and comments, and for a failing or flagged file its
 * spectrogram as a thumbnail. Every time is UTC; every page is numbered "page n of m".
 */
import { createRequire } from "node:module";
import type { Writable } from "node:stream";
import PDFDocument from "pdfkit";
import type { BatchExport, BatchExportFile } from "./batchJson.ts";

const require = createRequire(import.meta.url);
// The Latin subset of the portal's own font; glyphs outside it render as blanks.
const FONT_REGULAR = require.resolve("@fontsource/source-serif-4/files/source-serif-4-latin-400-normal.woff");
const FONT_BOLD = require.resolve("@fontsource/source-serif-4/files/source-serif-4-latin-700-normal.woff");

const fmt = (n: number | null | undefined, digits = 1): string => (n === null || n === undefined ? "—" : n.toFixed(digits));

/** "2026-12-01 09:05:00 UTC" from an ISO time. */
export function utc(iso: string | Date): string {
  const d = typeof iso === "string" ? new Date(iso) : iso;
  return Number.isNaN(d.getTime()) ? String(iso) : `${d.toISOString().slice(0, 19).replace("T", " ")} UTC`;
}

/** m:ss.ss within the audio. */
function position(seconds: number): string {
  const m = Math.floor(seconds / 60);
  return `${m}:${(seconds - m * 60).toFixed(2).padStart(5, "0")}`;
}

const COLUMNS = [
  { title: "File", width: 205 },
  { title: "Verdict", width: 45 },
  { title: "Review", width: 55 },
  { title: "LUFS", width: 38 },
  { title: "dBTP", width: 38 },
  { title: "Findings", width: 114 },
] as const;
const TABLE_WIDTH = 495;
const THUMB = { width: 300, height: 110 };

/** Whether the file's spectrogram is shown: it failed or a reviewer flagged it. */
export const wantsThumbnail = (f: Pick<BatchExportFile, "verdict" | "reviewState">): boolean => f.verdict === "fail" || f.reviewState === "flagged";

type Doc = InstanceType<typeof PDFDocument>;

function ensureRoom(doc: Doc, height: number): void {
  if (doc.y + height > doc.page.height - doc.page.margins.bottom) doc.addPage();
}

function summaryTable(doc: Doc, data: BatchExport): void {
  const left = doc.page.margins.left;
  const header = (): void => {
    let x = left;
    doc.font("bold").fontSize(9);
    const y = doc.y;
    for (const c of COLUMNS) {
      doc.text(c.title, x, y, { width: c.width - 4 });
      x += c.width;
    }
    doc.moveTo(left, doc.y + 2).lineTo(left + TABLE_WIDTH, doc.y + 2).stroke();
    doc.moveDown(0.4);
  };
  header();
  doc.font("body").fontSize(8.5);
  for (const file of data.files) {
    const codes = [...new Set(file.findings.filter((f) => f.severity !== "info").map((f) => f.code))].join(", ");
    const cells = [file.path, file.verdict, file.reviewState, fmt(file.metrics?.integratedLufs), fmt(file.metrics?.truePeakDbtp), codes || "—"];
    const height = Math.max(...cells.map((c, i) => doc.heightOfString(c, { width: COLUMNS[i].width - 4 })));
    if (doc.y + height > doc.page.height - doc.page.margins.bottom) {
      doc.addPage();
      header();
      doc.font("body").fontSize(8.5);
    }
    const y = doc.y;
    let x = left;
    cells.forEach((c, i) => {
      doc.text(c, x, y, { width: COLUMNS[i].width - 4 });
      x += COLUMNS[i].width;
    });
    doc.x = left;
    doc.y = y + height + 3;
  }
}

function line(doc: Doc, label: string, text: string): void {
  const left = doc.page.margins.left;
  ensureRoom(doc, doc.heightOfString(`${label}: ${text}`, { width: TABLE_WIDTH }));
  doc.x = left;
  if (text === "") doc.font("bold").text(`${label}:`, { width: TABLE_WIDTH });
  else doc.font("bold").text(`${label}: `, { continued: true }).font("body").text(text, { width: TABLE_WIDTH });
}

function fileSection(doc: Doc, file: BatchExportFile, index: number, thumbnail: Buffer | undefined): void {
  const left = doc.page.margins.left;
  ensureRoom(doc, 80);
  doc.moveDown(0.8);
  doc.x = left;
  doc.font("bold").fontSize(11).text(`${index + 1}. ${file.path}`, { width: TABLE_WIDTH });
  doc.fontSize(8.5);
  line(doc, "SHA-256", file.sha256 ?? "not computed");
  line(doc, "Verdict", `${file.verdict}; review ${file.reviewState}${file.error ? `; error ${file.error.code}: ${file.error.message}` : ""}`);

  if (thumbnail) {
    ensureRoom(doc, THUMB.height + 6);
    const y = doc.y + 2;
    try {
      doc.image(thumbnail, left, y, { fit: [THUMB.width, THUMB.height] });
      doc.y = y + THUMB.height + 4;
    } catch {
      // A stored image pdfkit cannot read is reported, never fatal to the report.
      doc.y = y;
      line(doc, "Spectrogram", "stored image could not be read");
    }
  } else if (wantsThumbnail(file)) {
    line(doc, "Spectrogram", "none stored");
  }

  doc.x = left;
  if (file.findings.length === 0) line(doc, "Findings", "none");
  else {
    line(doc, "Findings", String(file.findings.length));
    for (const f of file.findings) {
      const where = f.startSeconds === null ? "whole file" : `${position(f.startSeconds)}${f.endSeconds !== null ? `–${position(f.endSeconds)}` : ""}`;
      const channel = f.channel === null ? "" : `, channel ${f.channel + 1}`;
      const text = `• [${f.severity}] ${f.code} at ${where}${channel}: ${f.message}`;
      ensureRoom(doc, doc.heightOfString(text, { width: TABLE_WIDTH - 10 }));
      doc.font("body").text(text, left + 10, doc.y, { width: TABLE_WIDTH - 10 });
    }
  }
  doc.x = left;
  if (file.reviewEvents.length > 0) {
    line(doc, "Review trail", "");
    for (const e of file.reviewEvents) {
      const text = `• ${utc(e.createdAt)}: ${e.actor.name} set ${e.fromState} to ${e.toState}${e.reason ? ` (“${e.reason}”)` : ""}`;
      ensureRoom(doc, doc.heightOfString(text, { width: TABLE_WIDTH - 10 }));
      doc.font("body").text(text, left + 10, doc.y, { width: TABLE_WIDTH - 10 });
    }
  }
  doc.x = left;
  if (file.comments.length > 0) {
    line(doc, "Comments", "");
    for (const c of file.comments) {
      const text = `• ${utc(c.createdAt)}, ${c.author.name}: ${c.body}`;
      ensureRoom(doc, doc.heightOfString(text, { width: TABLE_WIDTH - 10 }));
      doc.font("body").text(text, left + 10, doc.y, { width: TABLE_WIDTH - 10 });
    }
  }
  doc.x = left;
}

/** "Page n of m" in every page's bottom margin, once all pages exist (pdfkit's buffered pages). */
function numberPages(doc: Doc, title: string): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const bottom = doc.page.margins.bottom;
    // Writing inside the margin would make pdfkit start a new page; lift the margin while we write.
    doc.page.margins.bottom = 0;
    doc.font("body").fontSize(8).text(`${title} · page ${i + 1} of ${range.count}`, doc.page.margins.left, doc.page.height - bottom + 15, {
      width: TABLE_WIDTH,
      align: "center",
      lineBreak: false,
    });
    doc.page.margins.bottom = bottom;
  }
}

/** `thumbnails`: spectrogram PNG bytes by file id, for the failing and flagged files (see wantsThumbnail). */
export function writeBatchPdf(data: BatchExport, out: Writable, thumbnails: ReadonlyMap<number, Buffer> = new Map()): void {
  const { batch } = data;
  const doc = new PDFDocument({
    size: "A4",
    margin: 50,
    bufferPages: true,
    info: { Title: `Tidemark batch ${batch.batchKey}`, Author: "Tidemark", Subject: batch.collection.name },
  });
  doc.pipe(out);
  doc.registerFont("body", FONT_REGULAR);
  doc.registerFont("bold", FONT_BOLD);

  doc.font("bold").fontSize(18).text(`Batch report: ${batch.batchKey}`);
  doc.moveDown(0.3).font("body").fontSize(10);
  const meta: [string, string][] = [
    ["Collection", batch.collection.name],
    ["Uploaded by", `${batch.uploader.name} <${batch.uploader.email}>`],
    ["Profile", batch.profileName + (batch.profileHash ? ` (${batch.profileHash.slice(0, 12)})` : "")],
    ["Tool version", batch.toolVersion],
    ["Scan", `${utc(batch.startedAt)} – ${utc(batch.finishedAt)}`],
    ["Files", `${batch.counts.files}: pass ${batch.counts.pass}, warn ${batch.counts.warn}, fail ${batch.counts.fail}, error ${batch.counts.error}`],
    ["Exported", utc(data.exportedAt)],
  ];
  for (const [k, v] of meta) doc.font("bold").text(`${k}: `, { continued: true }).font("body").text(v);
  doc.moveDown();

  summaryTable(doc, data);
  doc.addPage();
  doc.font("bold").fontSize(14).text("Files in detail");
  data.files.forEach((f, i) => fileSection(doc, f, i, thumbnails.get(f.id)));
  numberPages(doc, `Tidemark batch ${batch.batchKey}`);
  doc.end();
}
