import { Router } from "express";
import { UniqueConstraintError } from "sequelize";
import { createUserSchema, updateUserSchema } from "@tidemark/shared/contracts/users";
import type { AppContext } from "../context.ts";
import { toUserDto } from "../dto.ts";
import { conflict, HttpError } from "../errors.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireSessionAuth } from "../middleware/auth.ts";
import { loadUser } from "../middleware/loadEntity.ts";
import { User } from "../models/index.ts";
import { revokeTokensOf } from "../services/apiTokens.ts";
import { recordAudit } from "../services/audit.ts";
import { hashPassword, passwordProblem } from "../services/passwords.ts";
import { endSessionsOf } from "../services/sessions.ts";
import { validate } from "../validate.ts";

const newUser = validate("body", createUserSchema);
const userChange = validate("body", updateUserSchema);

function checkPassword(password: string, address: string): void {
  const problem = passwordProblem(password, address);
  if (problem) throw new HttpError(422, "weak_password", problem);
}

export function usersRouter(ctx: AppContext): Router {
  const router = Router();
  router.use("/users", requireSessionAuth, requirePermission("manageUsers"));

  router.get("/users", async (_req, res) => {
    const users = await User.findAll({ order: [["id", "ASC"]] });
    res.json(users.map(toUserDto));
  });

  router.post("/users", newUser, async (_req, res) => {
    const input = newUser.of(res);
    checkPassword(input.password, input.email);
    const passwordHash = await hashPassword(input.password, ctx.settings.passwordCost);
    try {
      const user = await ctx.sequelize.transaction(async (transaction) => {
        const made = await User.create({ email: input.email, name: input.name, role: input.role, passwordHash }, { transaction });
        await recordAudit(actorOf(res), { action: "user.create", targetType: "user", targetId: made.id, details: { email: made.email, role: made.role } }, transaction);
        return made;
      });
      res.status(201).json(toUserDto(user));
    } catch (e) {
      if (e instanceof UniqueConstraintError) throw conflict(`a user with e-mail ${input.email} already exists`, "email_taken");
      throw e;
    }
  });

  router.patch("/users/:id", loadUser, userChange, async (_req, res) => {
    const input = userChange.of(res);
    const target = res.locals.targetUser!;
    const self = res.locals.auth!.user;
    // An admin cannot lock themselves out (and so the last admin cannot vanish by accident).
    if (target.id === self.id && (input.disabled === true || (input.role !== undefined && input.role !== "admin"))) {
      throw conflict("you cannot disable your own account or remove your own admin role", "self_lockout");
    }
    if (input.password !== undefined) checkPassword(input.password, target.email);
    const changes: Partial<Pick<User, "name" | "role" | "disabled" | "passwordHash">> = {};
    if (input.name !== undefined) changes.name = input.name;
    if (input.role !== undefined) changes.role = input.role;
    if (input.disabled !== undefined) changes.disabled = input.disabled;
    if (input.password !== undefined) changes.passwordHash = await hashPassword(input.password, ctx.settings.passwordCost);
    await ctx.sequelize.transaction(async (transaction) => {
      await target.update(changes, { transaction });
      if (changes.passwordHash || changes.disabled) await endSessionsOf(ctx.sequelize, target.id, transaction);
      const tokensRevoked = changes.disabled ? await revokeTokensOf(target.id, transaction) : 0;
      const changed = Object.keys(changes).map((k) => (k === "passwordHash" ? "password" : k));
      await recordAudit(
        actorOf(res),
        { action: "user.update", targetType: "user", targetId: target.id, details: { changed, ...(input.role ? { role: input.role } : {}), ...(input.disabled !== undefined ? { disabled: input.disabled } : {}), ...(tokensRevoked ? { tokensRevoked } : {}) } },
        transaction,
      );
    });
    res.json(toUserDto(target));
  });

  return router;
}
