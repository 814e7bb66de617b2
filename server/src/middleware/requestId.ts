import { randomUUID } from "node:crypto";
import type { RequestHandler } from "express";

const ACCEPTABLE = /^[A-Za-z0-9._:-]{1,128}$/;

/** Keeps a caller's X-Request-Id when it is sane, otherwise makes one; echoed on every response. */
export const requestId: RequestHandler = (req, res, next) => {
  const given = req.get("x-request-id");
  const id = given && ACCEPTABLE.test(given) ? given : randomUUID();
  res.locals.requestId = id;
  res.setHeader("X-Request-Id", id);
  next();
};
