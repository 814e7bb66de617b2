import type { ReactNode } from "react";
import type { Permission } from "./permissions.ts";
import { useCan, useCurrentUser } from "./currentUser.ts";
import { EmptyState } from "../components/states.tsx";

const WHAT: Record<Permission, string> = {
  comment: "comment on files",
  review: "change review states",
  export: "download exports",
  audit: "read the audit trail",
  manageUsers: "manage users",
  ownTokens: "hold API tokens",
};

/** A screen the role may not use says so plainly instead of failing on every request. */
export function RequirePermission({ permission, children }: { permission: Permission; children: ReactNode }) {
  const user = useCurrentUser();
  const allowed = useCan(permission);
  if (allowed) return <>{children}</>;
  return (
    <EmptyState title="Not available for your role">
      You are signed in as {user.role}; that role cannot {WHAT[permission]}. Ask an administrator if you need it.
    </EmptyState>
  );
}
