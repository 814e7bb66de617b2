import type { Migration } from "../server/src/db/migrator.ts";

// Issue #17: a file name that is not UTF-8 is shown with U+FFFD in `path`; `path_bytes` keeps its exact bytes
// (base64, from the report's `pathBytes`), so two look-alike names in one collection stay two files and the
// batch export gives the bytes back. Null for every name that is valid UTF-8.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`alter table file_results add column path_bytes text`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`alter table file_results drop column path_bytes`);
};
