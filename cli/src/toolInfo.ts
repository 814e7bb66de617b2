/** The tool's name and version, from the cli package.json (read once, on first use). */
import { readFileSync } from "node:fs";

let cached: { name: string; version: string } | null = null;

export function toolInfo(): { name: string; version: string } {
  if (!cached) {
    const pkg = JSON.parse(readFileSync(new URL("../package.json", import.meta.url), "utf8")) as { version?: unknown };
    cached = { name: "tidemark", version: typeof pkg.version === "string" ? pkg.version : "0.0.0" };
  }
  return cached;
}
