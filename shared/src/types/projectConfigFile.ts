/** The project file's name and schema id, apart from its zod schema (projectConfig.ts) so the CLI can name them without loading zod. */
export const PROJECT_CONFIG_FILE = "tidemark.json";
export const PROJECT_CONFIG_JSON_SCHEMA_ID = "https://tidemark.invalid/schema/tidemark-config.schema.json";
