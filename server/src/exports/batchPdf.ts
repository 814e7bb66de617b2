/** GET /api/exports/batches/:id.pdf: a printable batch report, set in the shipped Source Serif 4. */
import { createRequire } from "node:module";
import type { Writable } from "node:stream";
import PDFDocument from "pdfkit";
import type { BatchExport } from "./batchJson.ts";

const require = createRequire(import.meta.url);
// The Latin subset of the portal's own font; glyphs outside it render as blanks.
const FONT_REGULAR = require.resolve("@fontsource/source-serif-4/files/source-serif-4-latin-400-normal.woff");
const FONT_BOLD = require.resolve("@fontsource/source-serif-4/files/source-serif-4-latin-700-normal.woff");

const fmt = (n: number | null | undefined, digits = 1): string => (n === null || n === undefined ? "—" : n.toFixed(digits));

const COLUMNS = [
  { title: "File", width: 205 },
  { title: "Verdict", width: 45 },
  { title: "Review", width: 55 },
  { title: "LUFS", width: 38 },
  { title: "dBTP", width: 38 },
  { title: "Findings", width: 114 },
] as const;

export function writeBatchPdf(data: BatchExport, out: Writable): void {
  const { batch } = data;
  const doc = new PDFDocument({
    size: "A4",
    margin: 50,
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
    ["Scan", `${batch.startedAt} – ${batch.finishedAt}`],
    ["Files", `${batch.counts.files}: pass ${batch.counts.pass}, warn ${batch.counts.warn}, fail ${batch.counts.fail}, error ${batch.counts.error}`],
    ["Exported", data.exportedAt],
  ];
  for (const [k, v] of meta) doc.font("bold").text(`${k}: `, { continued: true }).font("body").text(v);
  doc.moveDown();

  const left = doc.page.margins.left;
  const header = (): void => {
    let x = left;
    doc.font("bold").fontSize(9);
    const y = doc.y;
    for (const c of COLUMNS) {
      doc.text(c.title, x, y, { width: c.width - 4 });
      x += c.width;
    }
    doc.moveTo(left, doc.y + 2).lineTo(left + 495, doc.y + 2).stroke();
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
  doc.end();
}
