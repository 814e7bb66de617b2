/**
 * Totals of the Files list per filter, cached in memory under file_list_version (a counter a trigger
 * moves with every committed change to file_results). A page turn reads one tiny row unless the data
 * changed. When it did (or for a filter not seen yet) and many matches are expected, counting them would
 * cost 0.1–0.5 s at 1 M rows (a path search up to 2 s on a busy machine), so the answer carries an
 * approximate total, marked as such (the total counted before the change, or else an estimate), while one
 * exact count at a time runs in the background and fills the cache for the next request. The estimate is
 * kept too, so a filter waiting for its count is estimated once per version, not on every page.
 *
 * A background count waits for a quiet moment: it starts only once no list request has been in flight
 * for QUIET_MS. Started at once, it began with the request that asked for it, so on the first pages of a
 * burst (50 people opening the list together) and took a core from those pages for its whole length:
 * under `npm run load` most of the slowest requests of a run were such a burst (see README › Performance).
 */
import { QueryTypes, type Sequelize } from "sequelize";

const MAX_ENTRIES = 1000;

/** Up to this many expected matches the exact count runs inline: it is cheap, and small totals are read closely. */
export const EXACT_COUNT_MAX = 5_000;

/**
 * How long the list must have been idle before a background count starts. Short enough that counts still
 * run between the requests of 50 people paging with pauses (at ~45 requests a second, gaps this long come
 * about every other second), long enough that a burst's next request arrives first.
 */
export const QUIET_MS = 100;

type Counting = { count: () => Promise<number>; estimate: () => Promise<number> };

export interface ListTotals {
  /** `version`: file_list_version's version when the caller read it already (in the page's statement). */
  count(filterKey: string, how: Counting, version?: string): Promise<{ total: number; exact: boolean }>;
  /** Runs one list request's work, so background counts wait until no request is in flight. */
  during<T>(work: () => Promise<T>): Promise<T>;
  /** Resolves once no background count is running, waiting to start, or pausing after one. */
  settled(): Promise<void>;
}

export function createListTotals(
  sequelize: Sequelize,
  onError: (message: string) => void = () => undefined,
  options: { quietMs?: number } = {},
): ListTotals {
  const quietMs = options.quietMs ?? QUIET_MS;
  const cache = new Map<string, { version: string; total: number; exact: boolean }>();
  // The one count wanted (the first asked for; later ones are asked for again by their next request), the
  // one running (with its pause), the requests in flight, and the timer that waits for quiet.
  let wanted: { filterKey: string; version: string; count: () => Promise<number> } | null = null;
  let background: Promise<void> | null = null;
  let inFlight = 0;
  let quietTimer: NodeJS.Timeout | null = null;
  // Resolved whenever a wanted count starts or is dropped, for settled().
  let wake: (() => void) | null = null;
  let woken = new Promise<void>((r) => (wake = r));
  const notify = (): void => {
    wake?.();
    woken = new Promise<void>((r) => (wake = r));
  };

  const readVersion = async (): Promise<string> => {
    const [row] = await sequelize.query<{ version: string }>(`select version from file_list_version`, { type: QueryTypes.SELECT });
    return row?.version ?? "none";
  };

  const remember = (filterKey: string, version: string, total: number, exact = true): void => {
    if (cache.size >= MAX_ENTRIES && !cache.has(filterKey)) cache.delete(cache.keys().next().value!);
    cache.set(filterKey, { version, total, exact });
  };

  const startWanted = (): void => {
    quietTimer = null;
    if (!wanted || background || inFlight > 0) return;
    const { filterKey, version, count } = wanted;
    wanted = null;
    const started = Date.now();
    // One count at a time, then a pause three times as long as it took: while reviewers keep changing
    // files, recounting stays under a quarter of one database process.
    background = count()
      .then((total) => remember(filterKey, version, total))
      .catch((e: unknown) => onError(`counting files for ${filterKey}: ${e instanceof Error ? e.message : String(e)}`))
      .then(() => new Promise<void>((r) => setTimeout(r, Math.min(5_000, 3 * (Date.now() - started))).unref()))
      .finally(() => {
        background = null;
        waitForQuiet();
      });
    notify();
  };

  const waitForQuiet = (): void => {
    if (quietTimer) clearTimeout(quietTimer);
    quietTimer = wanted && !background && inFlight === 0 ? setTimeout(startWanted, quietMs) : null;
    quietTimer?.unref();
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
        const total = await how.count();
        remember(filterKey, version, total);
        return { total, exact: true };
      }
      if (!hit) remember(filterKey, version, guess, false);
      if (!wanted) {
        wanted = { filterKey, version, count: how.count };
        waitForQuiet();
      }
      return { total: guess, exact: false };
    },
    async during(work) {
      inFlight++;
      if (quietTimer) {
        clearTimeout(quietTimer);
        quietTimer = null;
      }
      try {
        return await work();
      } finally {
        inFlight--;
        waitForQuiet();
      }
    },
    async settled() {
      for (;;) {
        if (background) await background;
        else if (wanted) await woken;
        else return;
      }
    },
  };
}
