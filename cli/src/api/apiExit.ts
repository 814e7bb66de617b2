/**
 * What a failed server request means for the command's exit code, the same for every command:
 * a refused token exits 5 (with how to log in), an unreachable or wrong server 6, any other refusal 2.
 */
import { EXIT_CODES, ExitError, loginAdvice, oneLine } from "../errors.ts";
import { ApiError, ServerUnreachableError, WrongServerError } from "./apiClient.ts";

export function isAuthRefusal(error: unknown): boolean {
  return error instanceof ApiError && error.status === 401;
}

/** `what`: the action, for the message ("enqueue", "the lookup"). */
export function exitErrorFor(error: unknown, server: string, what: string): ExitError {
  if (error instanceof ExitError) return error;
  if (error instanceof ApiError && isAuthRefusal(error)) return new ExitError(EXIT_CODES.auth, `${server} refused the API token (${error.code}: ${error.message.replace(/^\d+ [\w-]+: /, "")}); ${loginAdvice(server)}`);
  if (error instanceof ApiError) return new ExitError(EXIT_CODES.usage, `${what}: the server refused: ${error.message}`);
  if (error instanceof ServerUnreachableError || error instanceof WrongServerError) return new ExitError(EXIT_CODES.unreachable, error.message);
  return new ExitError(EXIT_CODES.failed, `${what} failed: ${oneLine(error)}`);
}
