/**
 * Load steps: look up `:id`, put the entity on res.locals, or answer 400/404. Permission checks run
 * before these, so a 404 never tells an unauthorised caller that something exists.
 */
import type { Request, RequestHandler } from "express";
import { badRequest, notFound } from "../errors.ts";
import { ApiToken, Batch, Collection, FileResult, User } from "../models/index.ts";

export function idParam(req: Request, entity: string, name = "id"): number {
  const raw = req.params[name];
  const id = typeof raw === "string" && /^[1-9]\d{0,9}$/.test(raw) ? Number(raw) : NaN;
  if (!Number.isSafeInteger(id) || id > 2_147_483_647) {
    throw badRequest(`${entity} id must be a positive integer, got "${String(raw)}"`, "invalid_id");
  }
  return id;
}

export const loadFileResult: RequestHandler = async (req, res, next) => {
  const id = idParam(req, "file");
  const file = await FileResult.findByPk(id, { include: [{ model: Collection, as: "collection" }] });
  if (!file) throw notFound("file", id);
  res.locals.file = file;
  next();
};

export const loadBatch: RequestHandler = async (req, res, next) => {
  const id = idParam(req, "batch");
  const batch = await Batch.findByPk(id, {
    include: [
      { model: Collection, as: "collection" },
      { model: User, as: "uploader" },
    ],
  });
  if (!batch) throw notFound("batch", id);
  res.locals.batch = batch;
  next();
};

export const loadUser: RequestHandler = async (req, res, next) => {
  const id = idParam(req, "user");
  const user = await User.findByPk(id);
  if (!user) throw notFound("user", id);
  res.locals.targetUser = user;
  next();
};

/** Admins reach every token; others only their own (someone else's answers 404, not 403). */
export const loadToken: RequestHandler = async (req, res, next) => {
  const id = String(req.params.id);
  const token = id.length <= 64 ? await ApiToken.findByPk(id) : null;
  const auth = res.locals.auth;
  if (!token || !auth || (token.userId !== auth.user.id && auth.user.role !== "admin")) throw notFound("token", id);
  res.locals.token = token;
  next();
};

export const loadCollection: RequestHandler = async (req, res, next) => {
  const id = idParam(req, "collection");
  const collection = await Collection.findByPk(id);
  if (!collection) throw notFound("collection", id);
  res.locals.collection = collection;
  next();
};
