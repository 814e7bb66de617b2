/** The Actor (services/actor.ts) of a request: what authenticate and requestId put on res.locals. */
import type { Response } from "express";
import type { Actor } from "../services/actor.ts";

export function actorOf(res: Response): Actor {
  const auth = res.locals.auth;
  return { user: auth?.user ?? null, tokenId: auth?.tokenId ?? null, requestId: res.locals.requestId ?? null };
}
