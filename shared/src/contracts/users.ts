/** POST /api/users and PATCH /api/users/:id (admins). Password strength is the server's rule (422 weak_password). */
import { z } from "zod";
import { ROLES } from "../types/api.ts";

const email = z.string().trim().toLowerCase().max(320).pipe(z.email());
const name = z.string().trim().min(1).max(200);

export const createUserSchema = z.object({ email, name, role: z.enum(ROLES), password: z.string().max(1024) }).strict().describe("user");
export type CreateUserRequest = z.input<typeof createUserSchema>;

export const updateUserSchema = z
  .object({ name, role: z.enum(ROLES), disabled: z.boolean(), password: z.string().max(1024) })
  .partial()
  .strict()
  .describe("user change");
export type UpdateUserRequest = z.input<typeof updateUserSchema>;
