import path from "node:path";
import { fileURLToPath } from "node:url";

/** The repository root, whatever the working directory (config defaults are relative to it). */
export const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
