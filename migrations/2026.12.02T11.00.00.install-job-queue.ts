import PgBoss from "pg-boss";
import type { Migration } from "../server/src/db/migrator.ts";
import { DEAD_LETTER_QUEUE, DEFAULT_QUEUE_OPTIONS, QUEUE_SCHEMA, SCAN_QUEUE } from "../server/src/queue/queueNames.ts";

// pg-boss's own schema, installed here rather than on first start so every database the migrations
// reach (tests included) can take jobs. pg-boss's plans bring their own BEGIN/COMMIT, so they run outside
// a Sequelize transaction; a later pg-boss that needs a newer schema migrates it itself at start-up.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(PgBoss.getConstructionPlans(QUEUE_SCHEMA));
  await sequelize.transaction(async (transaction) => {
    const createQueue = (name: string, options: Record<string, unknown>) =>
      sequelize.query(`select ${QUEUE_SCHEMA}.create_queue($1, $2::json)`, { bind: [name, JSON.stringify(options)], transaction });
    // The dead-letter queue first: the scan queue's dead_letter column references it.
    await createQueue(DEAD_LETTER_QUEUE, { policy: "standard", retentionMinutes: DEFAULT_QUEUE_OPTIONS.retentionMinutes });
    await createQueue(SCAN_QUEUE, { policy: "standard", deadLetter: DEAD_LETTER_QUEUE, ...DEFAULT_QUEUE_OPTIONS });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`drop schema ${QUEUE_SCHEMA} cascade`);
};
