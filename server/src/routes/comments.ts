import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context.ts";
import { toCommentDto } from "../dto.ts";
import { requirePermission } from "../middleware/auth.ts";
import { loadFileResult } from "../middleware/loadEntity.ts";
import { Comment, User } from "../models/index.ts";
import { recordAudit } from "../services/audit.ts";
import { parseWith } from "../validate.ts";

const commentSchema = z.object({ body: z.string().trim().min(1).max(5000) }).strict();

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

  router.post("/files/:id/comments", requirePermission("comment"), loadFileResult, async (req, res) => {
    const { body } = parseWith(commentSchema, req.body, "comment");
    const author = res.locals.auth!.user;
    const file = res.locals.file!;
    const comment = await ctx.sequelize.transaction(async (transaction) => {
      const made = await Comment.create({ fileResultId: file.id, authorId: author.id, body }, { transaction });
      await recordAudit(res, { action: "comment.create", targetType: "file", targetId: file.id, details: { commentId: made.id } }, transaction);
      return made;
    });
    comment.author = author;
    res.status(201).json(toCommentDto(comment));
  });

  return router;
}
