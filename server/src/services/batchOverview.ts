/** The batch page's at-a-glance strip: each file's loudness and true peak, and counts per finding code. */
import { QueryTypes, type Sequelize } from "sequelize";
import { BATCH_OVERVIEW_MAX_FILES, type BatchOverviewDto } from "@tidemark/shared/types/api";
import type { Batch } from "../models/index.ts";

type OverviewFile = BatchOverviewDto["files"][number];
type FindingCount = BatchOverviewDto["findingCounts"][number];

export async function batchOverview(sequelize: Sequelize, batch: Batch): Promise<BatchOverviewDto> {
  const [files, findingCounts] = await Promise.all([
    sequelize.query<OverviewFile>(
      `select id, path, verdict, integrated_lufs as "integratedLufs", true_peak_dbtp as "truePeakDbtp"
         from file_results where batch_id = $1 order by id desc limit $2`,
      { bind: [batch.id, BATCH_OVERVIEW_MAX_FILES], type: QueryTypes.SELECT },
    ),
    // Over the whole batch, not only the files listed above.
    sequelize.query<FindingCount>(
      `select fi.code, fi.severity::text as severity, count(distinct fi.file_result_id)::int as files, count(*)::int as findings
         from findings fi join file_results f on f.id = fi.file_result_id
        where f.batch_id = $1
        group by fi.code, fi.severity
        order by count(*) desc, fi.code, fi.severity`,
      { bind: [batch.id], type: QueryTypes.SELECT },
    ),
  ]);
  return { batchId: batch.id, profileLimits: batch.profileLimits ?? null, files, findingCounts };
}
