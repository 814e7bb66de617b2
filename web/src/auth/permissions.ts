/**
 * The permission table of the product notes, for hiding what a role cannot do. The server enforces
 * the same table; this only keeps the screens honest.
 */
import type { Role } from "@tidemark/shared/types/api";

export type Permission = "comment" | "review" | "export" | "audit" | "manageUsers" | "ownTokens";

const ALLOWED: Record<Permission, readonly Role[]> = {
  comment: ["admin", "supervisor", "technician"],
  review: ["admin", "supervisor"],
  export: ["admin", "supervisor", "auditor"],
  audit: ["admin", "supervisor", "auditor"],
  manageUsers: ["admin"],
  ownTokens: ["admin", "supervisor", "technician"],
};

export function can(role: Role, permission: Permission): boolean {
  return ALLOWED[permission].includes(role);
}
