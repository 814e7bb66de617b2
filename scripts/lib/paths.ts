import path from "node:path";
import { fileURLToPath } from "node:url";

/** The repository root, whatever the caller's working directory. */
export const projectRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
