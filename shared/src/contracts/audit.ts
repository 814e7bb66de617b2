/** GET /api/audit and the audit CSV export (GET /api/exports/audit.csv) filter alike. */
import { z } from "zod";
import { optionalDate, optionalText, pageParams } from "./fields.ts";
import type { QueryOf } from "./searchParams.ts";

export const auditFilterFields = {
  /** A user id, or part of an e-mail address. */
  actor: optionalText(200),
  /** An action ending in "." is a prefix: "file." matches file.review and file.fixity_changed. */
  action: optionalText(200),
  targetType: optionalText(200),
  targetId: optionalText(200),
  from: optionalDate,
  to: optionalDate,
};

export const auditCsvQuerySchema = z.object(auditFilterFields).strict();
export const auditQuerySchema = z.object({ ...auditFilterFields, ...pageParams }).strict();

export type AuditFilters = z.output<typeof auditCsvQuerySchema>;
export type AuditListQuery = z.output<typeof auditQuerySchema>;
export type AuditQuery = QueryOf<typeof auditQuerySchema>;
export type AuditCsvQuery = QueryOf<typeof auditCsvQuerySchema>;
