import { createContext, useContext } from "react";
import type { UserDto } from "@tidemark/shared/types/api";
import { can, type Permission } from "./permissions.ts";

/** Set by RequireSession, so every screen behind it can rely on a signed-in user. */
export const CurrentUserContext = createContext<UserDto | null>(null);

export function useCurrentUser(): UserDto {
  const user = useContext(CurrentUserContext);
  if (!user) throw new Error("useCurrentUser() is only available inside <RequireSession>");
  return user;
}

export function useCan(permission: Permission): boolean {
  return can(useCurrentUser().role, permission);
}
