/** Download links: plain GETs the browser follows itself, so the session cookie goes along. */
import { withQuery } from "./client.ts";

export interface FilesCsvQuery {
  collection?: number;
  from?: string;
  to?: string;
}

export const exportUrls = {
  filesCsv: (query: FilesCsvQuery) => withQuery("/api/exports/files.csv", query),
  batchJson: (batchId: number) => `/api/exports/batches/${batchId}.json`,
  batchPdf: (batchId: number) => `/api/exports/batches/${batchId}.pdf`,
  batchPremis: (batchId: number) => `/api/exports/batches/${batchId}.premis.xml`,
  collectionJson: (collectionId: number) => `/api/exports/collections/${collectionId}.json`,
  collectionCsv: (collectionId: number) => withQuery("/api/exports/files.csv", { collection: collectionId }),
  collectionPremis: (collectionId: number) => `/api/exports/collections/${collectionId}.premis.xml`,
  auditCsv: (query: { actor?: string; action?: string; from?: string; to?: string } = {}) => withQuery("/api/exports/audit.csv", query),
};
