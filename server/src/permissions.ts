/**
 * The one permission table: the roles each route allows, as README.md › HTTP API lists them.
 * Routes name a permission; requirePermission() looks the role up here and nowhere else.
 */
import type { Role } from "@tidemark/shared/types/api";

export const PERMISSIONS = {
  /** View batches, files, spectrograms; close-ups, level grids, loudness curves and batch overviews; listen to excerpts. */
  view: ["admin", "supervisor", "technician", "auditor"],
  /** Upload via API token (CLI); also the queue work of distributed scans: enqueue, claim, result, fail, release. */
  upload: ["admin", "supervisor", "technician"],
  comment: ["admin", "supervisor", "technician"],
  /** Change review state / flag; also retry dead-lettered scanning jobs (a supervisor's call). */
  review: ["admin", "supervisor"],
  /** Export reports, read the audit trail. */
  export: ["admin", "supervisor", "auditor"],
  /** Manage users, revoke any token. */
  manageUsers: ["admin"],
  /** Delete a batch with its files and stored objects (issue #16: no orphans); not in the product notes' table, so the narrowest role. */
  deleteBatches: ["admin"],
  manageOwnTokens: ["admin", "supervisor", "technician"],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

export function can(role: Role, permission: Permission): boolean {
  return (PERMISSIONS[permission] as readonly Role[]).includes(role);
}
