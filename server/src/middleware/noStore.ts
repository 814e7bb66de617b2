import type { RequestHandler } from "express";

/** For answers that carry secrets (a new token), sessions or user lists: no browser or proxy keeps a copy. */
export const noStore: RequestHandler = (_req, res, next) => {
  res.set("Cache-Control", "no-store");
  res.set("Pragma", "no-cache");
  next();
};
