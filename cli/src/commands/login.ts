/**
 * `tidemark login --server URL`: signs in (POST /api/session, then POST /api/tokens with the session
 * cookie and the CSRF header) through the CLI's one API client, and stores {server, token} in the config
 * dir, or stores --token as given.
 */
import { hostname } from "node:os";
import { CSRF_HEADER, type CreatedTokenDto } from "@tidemark/shared/types/api";
import { ApiError, createApiClient, retryPolicyFrom } from "../api/apiClient.ts";
import { exitErrorFor } from "../api/apiExit.ts";
import { writeStoredLogin } from "../config/storedLogin.ts";
import { EXIT_CODES, ExitError, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { LoginOptions } from "../options.ts";
import { promptHidden, promptLine, readAllStdin } from "./prompt.ts";

/** Only the name=value part of each Set-Cookie: what a client sends back. */
export function cookieHeaderFrom(response: { headers: Headers }): string {
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

  const api = createApiClient(options.server, null, retryPolicyFrom(io.env));
  const refused = (what: string) => (error: unknown): never => {
    // A refusal of the sign-in or the token is about the credentials (2); an unreachable or wrong server is 4.
    if (error instanceof ApiError) throw new UsageError(`${what} by ${options.server}: ${error.message}`);
    throw exitErrorFor(error, options.server, "login");
  };
  const session = await api
    .request<unknown>("/api/session", { method: "POST", contentType: "application/json", headers: { [CSRF_HEADER]: "1" }, body: () => JSON.stringify({ email, password }) })
    .catch(refused("sign-in refused"));
  const cookie = cookieHeaderFrom(session);
  if (!cookie) throw new ExitError(EXIT_CODES.failed, `${options.server} signed in without a session cookie`);

  const tokenName = options.tokenName ?? `tidemark-cli on ${hostname()}`;
  const created = await api
    .request<CreatedTokenDto | null>("/api/tokens", {
      method: "POST",
      contentType: "application/json",
      headers: { cookie, [CSRF_HEADER]: "1" },
      body: () => JSON.stringify({ name: tokenName }),
    })
    .catch(refused("no token issued"));
  const dto = created.body;
  if (!dto || typeof dto.token !== "string") throw new ExitError(EXIT_CODES.failed, `${options.server} answered without a token`);

  const file = await writeStoredLogin({ server: options.server, token: dto.token }, io.env);
  log(`signed in as ${email}; token "${dto.name}" stored in ${file}`);
  return EXIT_CODES.ok;
}
