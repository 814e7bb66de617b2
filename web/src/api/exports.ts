/** Download links: plain GETs the browser follows itself, so the session cookie goes along. */
import { auditCsvQuerySchema } from "@tidemark/shared/contracts/audit";
import { filesCsvQuerySchema } from "@tidemark/shared/contracts/exports";
import type { AuditCsvQuery, FilesCsvQuery } from "@tidemark/shared/types/api";
import { requestUrl } from "./client.ts";

export const exportUrls = {
  filesCsv: (query: FilesCsvQuery) => requestUrl("/api/exports/files.csv", filesCsvQuerySchema, query),
  batchJson: (batchId: number) => `/api/exports/batches/${batchId}.json`,
  batchPdf: (batchId: number) => `/api/exports/batches/${batchId}.pdf`,
  batchPremis: (batchId: number) => `/api/exports/batches/${batchId}.premis.xml`,
  collectionJson: (collectionId: number) => `/api/exports/collections/${collectionId}.json`,
  collectionCsv: (collectionId: number) => requestUrl("/api/exports/files.csv", filesCsvQuerySchema, { collection: collectionId }),
  collectionPremis: (collectionId: number) => `/api/exports/collections/${collectionId}.premis.xml`,
  auditCsv: (query: AuditCsvQuery = {}) => requestUrl("/api/exports/audit.csv", auditCsvQuerySchema, query),
};
