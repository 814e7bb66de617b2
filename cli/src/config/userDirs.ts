/**
 * Where tidemark keeps per-user state: the stored login (config dir) and the upload spool (data dir).
 * XDG base directories on Linux, the platform's usual places elsewhere; env vars override both.
 */
import { homedir } from "node:os";
import path from "node:path";

type Env = NodeJS.ProcessEnv;

export function configDir(env: Env = process.env): string {
  if (env.TIDEMARK_CONFIG_DIR) return path.resolve(env.TIDEMARK_CONFIG_DIR);
  if (process.platform === "win32" && env.APPDATA) return path.join(env.APPDATA, "tidemark");
  if (process.platform === "darwin") return path.join(homedir(), "Library", "Preferences", "tidemark");
  return path.join(env.XDG_CONFIG_HOME || path.join(homedir(), ".config"), "tidemark");
}

export function spoolDir(env: Env = process.env): string {
  if (env.TIDEMARK_SPOOL_DIR) return path.resolve(env.TIDEMARK_SPOOL_DIR);
  if (process.platform === "win32" && env.LOCALAPPDATA) return path.join(env.LOCALAPPDATA, "tidemark", "spool");
  if (process.platform === "darwin") return path.join(homedir(), "Library", "Application Support", "tidemark", "spool");
  return path.join(env.XDG_DATA_HOME || path.join(homedir(), ".local", "share"), "tidemark", "spool");
}
