/**
 * Totals of the Files list per filter, cached in memory under file_list_version (a counter a trigger
 * moves with every committed change to file_results). A page turn reads one tiny row unless the data
 * changed. When it did (or for a filter not seen yet) and many matches are expected, counting them would
 * cost 0.1–0.5 s at 1 M rows, so the answer carries an approximate total, marked as such (the total counted
 * before the change, or else an estimate), while one exact count at a time runs in the background and
 * fills the cache for the next request. The estimate is kept too, so a filter waiting for its count is
 * estimated once per version, not on every page.
 */
import { QueryTypes, type Sequelize } from "sequelize";

const MAX_ENTRIES = 1000;

/** Up to this many expected matches the exact count runs inline: it is cheap, and small totals are read closely. */
export const EXACT_COUNT_MAX = 5_000;

export interface Counting {
  /** The exact count, as the background runs it. */
  count: () => Promise<number>;
  /** The same count for a small set, made inline (fewer round trips than `count` where that matters). */
  countInline?: () => Promise<number>;
  estimate: () => Promise<number>;
}

export interface ListTotals {
  /** `version`: file_list_version's version when the caller has read it already (in its page's statement). */
  count(filterKey: string, how: Counting, version?: string): Promise<{ total: number; exact: boolean }>;
  /** Resolves once no background count (or its pause) is running. */
  settled(): Promise<void>;
}

export function createListTotals(sequelize: Sequelize, onError: (message: string) => void = () => undefined): ListTotals {
  const cache = new Map<string, { version: string; total: number; exact: boolean }>();
  let background: Promise<void> | null = null;
  const readVersion = async (): Promise<string> => {
    const [row] = await sequelize.query<{ version: string }>(`select version from file_list_version`, { type: QueryTypes.SELECT });
    return row?.version ?? "none";
  };
  const remember = (filterKey: string, version: string, total: number, exact = true): void => {
    if (cache.size >= MAX_ENTRIES && !cache.has(filterKey)) cache.delete(cache.keys().next().value!);
    cache.set(filterKey, { version, total, exact });
  };
  return {
    async count(filterKey, how, known) {
      // Read before counting: a change committed in between gets a newer version, so no stale total survives it.
      const version = known ?? (await readVersion());
      const hit = cache.get(filterKey);
      if (hit && hit.version === version && hit.exact) return { total: hit.total, exact: true };
      // A total counted before the latest change is usually closer than an estimate (and free); an
      // estimate already made for this version is not made again.
      const guess = hit ? hit.total : await how.estimate();
      if (guess <= EXACT_COUNT_MAX) {
        const total = await (how.countInline ?? how.count)();
        remember(filterKey, version, total);
        return { total, exact: true };
      }
      if (!hit) remember(filterKey, version, guess, false);
      // One background count at a time, then a pause three times as long as it took: while reviewers keep
      // changing files, recounting stays under a quarter of one database process instead of competing with
      // every page (one count at 1 M rows takes 0.1–0.5 s).
      if (!background) {
        const started = Date.now();
        background = how
          .count()
          .then((total) => remember(filterKey, version, total))
          .catch((e: unknown) => onError(`counting files for ${filterKey}: ${e instanceof Error ? e.message : String(e)}`))
          .then(() => new Promise<void>((r) => setTimeout(r, Math.min(5_000, 3 * (Date.now() - started))).unref()))
          .finally(() => {
            background = null;
          });
      }
      return { total: guess, exact: false };
    },
    async settled() {
      while (background) await background;
    },
  };
}
