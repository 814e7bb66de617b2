/**
 * Who does a write, as services see it: the user (null when nobody is signed in, e.g. a failed sign-in or
 * a password reset), the API token it came with (null for a session) and the request id the audit trail
 * records. Routes build it (middleware/actor.ts); services know nothing of HTTP.
 */
import type { User } from "../models/index.ts";

export interface Actor {
  user: User | null;
  tokenId: string | null;
  requestId: string | null;
}

/** The signed-in user of a service that is only reached behind authentication. */
export function actingUser(actor: Actor): User {
  if (!actor.user) throw new Error("expected a signed-in user for this action, got an anonymous actor");
  return actor.user;
}

export const isAdmin = (actor: Actor): boolean => actor.user?.role === "admin";
