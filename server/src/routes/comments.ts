import { Router } from "express";
import { createCommentSchema } from "@tidemark/shared/contracts/files";
import type { AppContext } from "../context.ts";
import { toCommentDto } from "../dto.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadFileResult } from "../middleware/loadEntity.ts";
import { badRequest } from "../errors.ts";
import { Comment, User, type FileResult } from "../models/index.ts";
import { recordAudit } from "../services/audit.ts";
import { validate } from "../validate.ts";

const newComment = validate("body", createCommentSchema);

/** An anchor must fall inside the file: atSeconds within its duration, channel within its channel count. */
function checkAnchor(file: FileResult, atSeconds: number | null, channel: number | null): void {
  const duration = file.durationSeconds;
  if (atSeconds !== null && (duration === null || atSeconds > duration)) {
    throw badRequest(`atSeconds must be within the file's duration (0–${duration ?? "unknown"} s), got ${atSeconds}`, "at_seconds_out_of_range");
  }
  const channels = file.format?.channels ?? null;
  if (channel !== null && (channels === null || channel >= channels)) {
    throw badRequest(`channel must be 0–${channels === null ? "?" : channels - 1} for this file (${channels ?? "unknown"} channel(s)), got ${channel}`, "channel_out_of_range");
  }
}

export function commentsRouter(ctx: AppContext): Router {
  const router = Router();

  router.get("/files/:id/comments", requirePermission("view"), loadFileResult, async (_req, res) => {
    const comments = await Comment.findAll({
      where: { fileResultId: res.locals.file!.id },
      include: [{ model: User, as: "author" }],
      order: [["createdAt", "ASC"], ["id", "ASC"]],
    });
    res.json(comments.map(toCommentDto));
  });

  router.post("/files/:id/comments", requirePermission("comment"), loadFileResult, newComment, async (_req, res) => {
    const input = newComment.of(res);
    const author = res.locals.auth!.user;
    const file = res.locals.file!;
    const atSeconds = input.atSeconds ?? null;
    const channel = input.channel ?? null;
    checkAnchor(file, atSeconds, channel);
    const comment = await ctx.sequelize.transaction(async (transaction) => {
      const made = await Comment.create({ fileResultId: file.id, authorId: author.id, body: input.body, atSeconds, channel }, { transaction });
      await recordAudit(actorOf(res), { action: "comment.create", targetType: "file", targetId: file.id, details: { commentId: made.id, atSeconds, channel } }, transaction);
      return made;
    });
    comment.author = author;
    res.status(201).json(toCommentDto(comment));
  });

  return router;
}
