/**
 * `tidemark login --server URL`: signs in (POST /api/session, then POST /api/tokens with the session
 * cookie and the CSRF header) and stores {server, token} in the config dir, or stores --token as given.
 */
import { hostname } from "node:os";
import { CSRF_HEADER, type ApiErrorBody, type CreatedTokenDto } from "@tidemark/shared/types/api";
import { writeStoredLogin } from "../config/storedLogin.ts";
import { EXIT_CODES, ExitError, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { LoginOptions } from "../options.ts";
import { promptHidden, promptLine, readAllStdin } from "./prompt.ts";

async function serverError(response: Response): Promise<string> {
  const body = (await response.json().catch(() => null)) as Partial<ApiErrorBody> | null;
  return body?.error?.message ? `${response.status} ${body.error.code ?? ""}: ${body.error.message}`.replace(" :", ":") : `${response.status} ${response.statusText}`;
}

async function request(url: string, init: RequestInit): Promise<Response> {
  try {
    return await fetch(url, { ...init, signal: AbortSignal.timeout(30_000) });
  } catch (error) {
    const cause = (error as { cause?: { code?: string } }).cause?.code;
    throw new ExitError(EXIT_CODES.failed, `cannot reach ${new URL(url).origin}: ${cause ?? (error as Error).message}`);
  }
}

/** Only the name=value part of each Set-Cookie: what a client sends back. */
export function cookieHeaderFrom(response: Response): string {
  return response.headers
    .getSetCookie()
    .map((c) => c.split(";")[0].trim())
    .filter((c) => c.includes("="))
    .join("; ");
}

export async function loginCommand(options: LoginOptions, io: CliIo): Promise<number> {
  const log = (line: string): void => void io.stderr.write(`tidemark: ${line}\n`);
  if (options.token) {
    const file = await writeStoredLogin({ server: options.server, token: options.token }, io.env);
    log(`token stored for ${options.server} in ${file}`);
    return EXIT_CODES.ok;
  }
  const interactive = io.stdin.isTTY === true;
  const email = options.email ?? (interactive ? await promptLine("E-mail: ", io) : null);
  if (!email) throw new UsageError("expected --email (there is no terminal to ask on)");
  let password: string | null = null;
  if (options.passwordStdin) password = (await readAllStdin(io)).replace(/\r?\n$/, "");
  else if (interactive) password = await promptHidden("Password: ", io);
  if (!password) throw new UsageError("expected a password: use --password-stdin, or run on a terminal to be asked");

  const session = await request(`${options.server}/api/session`, {
    method: "POST",
    headers: { "content-type": "application/json", [CSRF_HEADER]: "1" },
    body: JSON.stringify({ email, password }),
  });
  if (!session.ok) throw new UsageError(`sign-in refused by ${options.server}: ${await serverError(session)}`);
  const cookie = cookieHeaderFrom(session);
  if (!cookie) throw new ExitError(EXIT_CODES.failed, `${options.server} signed in without a session cookie`);

  const tokenName = options.tokenName ?? `tidemark-cli on ${hostname()}`;
  const created = await request(`${options.server}/api/tokens`, {
    method: "POST",
    headers: { "content-type": "application/json", cookie, [CSRF_HEADER]: "1" },
    body: JSON.stringify({ name: tokenName }),
  });
  if (!created.ok) throw new UsageError(`${options.server} did not issue a token: ${await serverError(created)}`);
  const dto = (await created.json().catch(() => null)) as CreatedTokenDto | null;
  if (!dto || typeof dto.token !== "string") throw new ExitError(EXIT_CODES.failed, `${options.server} answered without a token`);

  const file = await writeStoredLogin({ server: options.server, token: dto.token }, io.env);
  log(`signed in as ${email}; token "${dto.name}" stored in ${file}`);
  return EXIT_CODES.ok;
}
