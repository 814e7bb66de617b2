/** Signing in (POST /api/session) and resetting a password (POST /api/password-reset, …/confirm). */
import { z } from "zod";

export const signInSchema = z.object({
  email: z.string().trim().min(1).max(320),
  password: z.string().min(1).max(1024),
}).describe("sign-in");
export type SignInRequest = z.input<typeof signInSchema>;

export const passwordResetRequestSchema = z.object({ email: z.string().trim().min(1).max(320) }).describe("password-reset request");
export type PasswordResetRequest = z.input<typeof passwordResetRequestSchema>;

export const passwordResetConfirmSchema = z.object({ token: z.string().min(1).max(200), password: z.string().min(1).max(1024) }).describe("password-reset confirmation");
export type PasswordResetConfirmRequest = z.input<typeof passwordResetConfirmSchema>;
