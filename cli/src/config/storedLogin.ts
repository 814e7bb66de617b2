/** The {server, token} pair written by `tidemark login`, kept readable by its owner only (mode 0600). */
import { chmod, mkdir, readFile, rename, writeFile } from "node:fs/promises";
import path from "node:path";
import { EXIT_CODES, ExitError, UsageError } from "../errors.ts";
import { configDir } from "./userDirs.ts";

export interface StoredLogin {
  server: string;
  token: string;
}

export const LOGIN_FILE_NAME = "login.json";

export function loginFilePath(env: NodeJS.ProcessEnv): string {
  return path.join(configDir(env), LOGIN_FILE_NAME);
}

export async function readStoredLogin(env: NodeJS.ProcessEnv): Promise<StoredLogin | null> {
  const file = loginFilePath(env);
  let text: string;
  try {
    text = await readFile(file, "utf8");
  } catch (error) {
    if ((error as { code?: string }).code === "ENOENT") return null;
    throw new UsageError(`cannot read the stored login ${file}: ${(error as { code?: string }).code ?? String(error)}`);
  }
  try {
    const value = JSON.parse(text) as Partial<StoredLogin>;
    if (typeof value.server === "string" && typeof value.token === "string") return { server: value.server, token: value.token };
  } catch {
    // Fall through to the error below.
  }
  throw new UsageError(`the stored login ${file} is damaged: expected {"server","token"}; run tidemark login again`);
}

export async function writeStoredLogin(login: StoredLogin, env: NodeJS.ProcessEnv): Promise<string> {
  const file = loginFilePath(env);
  await mkdir(path.dirname(file), { recursive: true, mode: 0o700 });
  // Write then rename, so a crash never leaves half a token; chmod because umask may widen the mode.
  const temp = `${file}.${process.pid}.tmp`;
  await writeFile(temp, `${JSON.stringify(login, null, 2)}\n`, { mode: 0o600 });
  await chmod(temp, 0o600);
  await rename(temp, file);
  return file;
}

/** Token and server for an upload: env TIDEMARK_TOKEN wins over the stored login; --server over both. */
export async function resolveCredentials(
  serverOption: string | null,
  env: NodeJS.ProcessEnv,
): Promise<{ server: string; token: string }> {
  const stored = await readStoredLogin(env);
  const server = serverOption ?? env.TIDEMARK_SERVER ?? stored?.server ?? null;
  if (!server) throw new UsageError("no server to upload to: give --server URL, or run tidemark login --server URL first");
  // A stored token is only ever sent to the server it was issued by.
  const storedToken = stored && stored.server === server.replace(/\/+$/, "") ? stored.token : null;
  const token = env.TIDEMARK_TOKEN || storedToken;
  if (!token) throw new ExitError(EXIT_CODES.auth, `no API token for ${server}: set TIDEMARK_TOKEN=id:secret or run tidemark login --server ${server}`);
  return { server: server.replace(/\/+$/, ""), token };
}
