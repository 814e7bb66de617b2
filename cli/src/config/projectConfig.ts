/**
 * Finds and reads `tidemark.json` (the project's CLI defaults) in the working folder or the nearest parent.
 * A broken file is a usage error naming the file and the bad field, never silently ignored. Its zod schema is
 * loaded only when there is a file to check: a command run without one does not pay for building it.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import type { ProjectConfig } from "@tidemark/shared/types/projectConfig";
import { PROJECT_CONFIG_FILE } from "@tidemark/shared/types/projectConfigFile";
import { UsageError } from "../errors.ts";

export interface FoundProjectConfig {
  /** Absolute path of the tidemark.json that was read. */
  file: string;
  config: ProjectConfig;
}

function readIfPresent(file: string): string | null {
  try {
    return readFileSync(file, "utf8");
  } catch (error) {
    const code = (error as { code?: string }).code;
    if (code === "ENOENT" || code === "ENOTDIR") return null;
    throw new UsageError(`cannot read ${file}: ${code ?? String(error)}`);
  }
}

export async function parseProjectConfig(text: string, file: string): Promise<ProjectConfig> {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (error) {
    throw new UsageError(`${file} is not valid JSON: ${(error as Error).message.split("\n")[0]}`);
  }
  const { projectConfigSchema } = await import("@tidemark/shared/types/projectConfig");
  // One parse a process: not worth zod's generated fast path, which it would compile on the first parse.
  const parsed = projectConfigSchema.safeParse(value, { jitless: true });
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = issue.path.map(String).join(".") || "(top level)";
    throw new UsageError(`${file}: ${field}: ${issue.message.replace(/^Invalid input: /, "")}`);
  }
  return parsed.data;
}

/** The nearest tidemark.json from `cwd` upwards, or null. TIDEMARK_NO_CONFIG=1 ignores every such file. */
export async function findProjectConfig(cwd: string, env: NodeJS.ProcessEnv): Promise<FoundProjectConfig | null> {
  if (env.TIDEMARK_NO_CONFIG === "1") return null;
  let dir = path.resolve(cwd);
  for (;;) {
    const file = path.join(dir, PROJECT_CONFIG_FILE);
    const text = readIfPresent(file);
    if (text !== null) return { file, config: await parseProjectConfig(text, file) };
    const parent = path.dirname(dir);
    if (parent === dir) return null;
    dir = parent;
  }
}

/** A path written in tidemark.json (relative to that file's folder), as seen from the working folder. */
export function configPath(found: FoundProjectConfig, value: string, cwd: string): string {
  return path.relative(cwd, path.resolve(path.dirname(found.file), value)) || ".";
}

/** A profile value from tidemark.json: a built-in name stays a name; a file is resolved against the config's folder. */
export function configProfile(found: FoundProjectConfig, value: string, cwd: string): string {
  return /[\\/]|\.json$/i.test(value) ? configPath(found, value, cwd) : value;
}

/** Where a value came from, so a scan can say when it judged with the built-in default profile. */
export type ValueSource = "flag" | "tidemark.json" | "default";

/** Flag first, then tidemark.json, then the built-in default: the one precedence every command follows. */
export class ProjectDefaults {
  constructor(
    readonly found: FoundProjectConfig | null,
    private readonly cwd: string,
  ) {}

  static async load(cwd: string, env: NodeJS.ProcessEnv): Promise<ProjectDefaults> {
    return new ProjectDefaults(await findProjectConfig(cwd, env), cwd);
  }

  private get config(): ProjectConfig {
    return this.found?.config ?? {};
  }

  profile(flag: string | undefined, builtin: string): { profile: string; from: ValueSource } {
    if (flag !== undefined) return { profile: flag, from: "flag" };
    if (this.found && this.config.profile) return { profile: configProfile(this.found, this.config.profile, this.cwd), from: "tidemark.json" };
    return { profile: builtin, from: "default" };
  }

  include(flag: string[], builtin: readonly string[]): string[] {
    return flag.length > 0 ? flag : [...(this.config.include ?? builtin)];
  }

  exclude(flag: string[]): string[] {
    return flag.length > 0 ? flag : [...(this.config.exclude ?? [])];
  }

  server(flag: string | undefined): string | null {
    return flag ?? (this.config.server ? this.config.server.replace(/\/+$/, "") : null);
  }

  collection(flag: string | undefined): string | null {
    return flag ?? this.config.collection ?? null;
  }

  spectrograms(flag: string | undefined): string | null {
    if (flag !== undefined) return flag;
    return this.found && this.config.spectrograms ? configPath(this.found, this.config.spectrograms, this.cwd) : null;
  }

  failOn(flag: "fail" | "warn" | undefined): "fail" | "warn" {
    return flag ?? this.config.failOn ?? "fail";
  }
}
