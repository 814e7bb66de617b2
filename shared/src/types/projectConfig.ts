/**
 * `tidemark.json`: a project's defaults for the CLI (profile, collection, server, globs, spectrogram
 * folder, --fail-on), found in the current folder or its parents. Flags on the command line win over it.
 * The shipped JSON Schema (shared/schema/tidemark-config.schema.json) is generated from this zod schema.
 */
import { z } from "zod";
import { PROJECT_CONFIG_JSON_SCHEMA_ID } from "./projectConfigFile.ts";

export { PROJECT_CONFIG_FILE, PROJECT_CONFIG_JSON_SCHEMA_ID } from "./projectConfigFile.ts";

const glob = z.string().min(1).max(500);

export const projectConfigSchema = z
  .object({
    $schema: z.string().optional().describe("Path or URL of this file's JSON Schema, for editors."),
    profile: z.string().min(1).max(500).optional().describe("Built-in profile name, or a profile JSON file relative to this file."),
    collection: z.string().trim().min(1).max(200).optional().describe("Collection uploads and enqueued runs are filed under."),
    server: z
      .url({ protocol: /^https?$/ })
      .optional()
      .describe("Server for upload, enqueue, worker and match (http:// or https://)."),
    include: z.array(glob).min(1).max(100).optional().describe("File-name globs to scan (replace the defaults)."),
    exclude: z.array(glob).max(100).optional().describe("Files or folders to skip."),
    spectrograms: z.string().min(1).max(4096).optional().describe("Folder for spectrogram PNGs, relative to this file."),
    failOn: z.enum(["fail", "warn"]).optional().describe("\"warn\": a file that only warned also fails the run (exit 1)."),
  })
  .strict();

export type ProjectConfig = z.infer<typeof projectConfigSchema>;

export function projectConfigJsonSchemaText(): string {
  const generated = z.toJSONSchema(projectConfigSchema) as Record<string, unknown>;
  const schema = {
    ...generated,
    $id: PROJECT_CONFIG_JSON_SCHEMA_ID,
    title: "Tidemark project file (tidemark.json)",
    description: "Defaults for the tidemark CLI. Generated from shared/src/types/projectConfig.ts; do not edit by hand.",
  };
  return `${JSON.stringify(schema, null, 2)}\n`;
}
