/**
 * Totals of the Files list per filter, cached in memory under file_list_version (a counter a trigger
 * moves with every committed change to file_results). Counting 100 k rows per page turn was most of a
 * list request's database time; now a page turn reads one tiny row unless the data changed.
 */
import { QueryTypes, type Sequelize } from "sequelize";

const MAX_ENTRIES = 1000;

export interface ListTotals {
  count(filterKey: string, countRows: () => Promise<number>): Promise<number>;
}

export function createListTotals(sequelize: Sequelize): ListTotals {
  const cache = new Map<string, { version: string; total: number }>();
  return {
    async count(filterKey, countRows) {
      // Read before counting: a change committed in between gets a newer version, so no stale total survives it.
      const [row] = await sequelize.query<{ version: string }>(`select version from file_list_version`, { type: QueryTypes.SELECT });
      const version = row?.version ?? "none";
      const hit = cache.get(filterKey);
      if (hit && hit.version === version) return hit.total;
      const total = await countRows();
      if (cache.size >= MAX_ENTRIES) cache.delete(cache.keys().next().value!);
      cache.set(filterKey, { version, total });
      return total;
    },
  };
}
