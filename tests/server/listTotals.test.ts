/**
 * The Files list's totals cache (server/src/services/listTotals.ts) against a stand-in database: only
 * the version row is read from it, so the rules can be checked without PostgreSQL (file_list_version
 * and the real counts are covered by filesAt100k.test.ts).
 */
import type { Sequelize } from "sequelize";
import { describe, expect, it } from "vitest";
import { createListTotals, EXACT_COUNT_MAX } from "../../server/src/services/listTotals.ts";

function fakeDb() {
  const db = { version: "1" };
  const sequelize = { query: async () => [{ version: db.version }] } as unknown as Sequelize;
  return { db, sequelize };
}

/** A counter that records its calls and answers `exact` (after `delayMs`). */
function counter(exact: number, estimate: number, delayMs = 0) {
  const calls = { count: 0, estimate: 0 };
  return {
    calls,
    how: {
      count: async () => {
        calls.count++;
        await new Promise((r) => setTimeout(r, delayMs));
        return exact;
      },
      estimate: async () => {
        calls.estimate++;
        return estimate;
      },
    },
  };
}

describe("list totals", () => {
  it("counts a small set at once and serves it from the cache until the version moves", async () => {
    const { db, sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const c = counter(480, 500);
    expect(await totals.count("batch=3", c.how)).toEqual({ total: 480, exact: true });
    expect(await totals.count("batch=3", c.how)).toEqual({ total: 480, exact: true });
    expect(c.calls).toEqual({ count: 1, estimate: 1 });
    db.version = "2";
    expect(await totals.count("batch=3", c.how)).toEqual({ total: 480, exact: true });
    // The stale total (≤ EXACT_COUNT_MAX) decides without asking the planner again.
    expect(c.calls).toEqual({ count: 2, estimate: 1 });
  });

  it("answers a large set with the estimate, marked, and the exact total once the background count is done", async () => {
    const { sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const c = counter(48_324, 47_900, 20);
    expect(EXACT_COUNT_MAX).toBeLessThan(47_900);
    expect(await totals.count("finding=hum", c.how)).toEqual({ total: 47_900, exact: false });
    await totals.settled();
    expect(await totals.count("finding=hum", c.how)).toEqual({ total: 48_324, exact: true });
    expect(c.calls).toEqual({ count: 1, estimate: 1 });
  });

  it("estimates a filter once per version while its count waits for the background", async () => {
    const { db, sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const slow = counter(30_000, 29_000, 40);
    const waiting = counter(25_000, 26_000);
    // The slow count takes the one background slot, so the second filter's count has to wait.
    await totals.count("finding=hum", slow.how);
    expect(await totals.count("q=take-07", waiting.how)).toEqual({ total: 26_000, exact: false });
    expect(await totals.count("q=take-07", waiting.how)).toEqual({ total: 26_000, exact: false });
    expect(waiting.calls).toEqual({ count: 0, estimate: 1 });
    db.version = "2";
    // After a change the earlier estimate still stands in (no new estimate) until a count is made.
    expect(await totals.count("q=take-07", waiting.how)).toEqual({ total: 26_000, exact: false });
    expect(waiting.calls.estimate).toBe(1);
    await totals.settled();
    await totals.count("q=take-07", waiting.how);
    await totals.settled();
    expect(await totals.count("q=take-07", waiting.how)).toEqual({ total: 25_000, exact: true });
  });

  it("after a change, serves the earlier count as approximate while recounting", async () => {
    const { db, sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const before = counter(48_324, 47_900);
    await totals.count("finding=hum", before.how);
    await totals.settled();
    db.version = "2";
    const after = counter(48_325, 47_900);
    expect(await totals.count("finding=hum", after.how)).toEqual({ total: 48_324, exact: false });
    expect(after.calls.estimate).toBe(0);
    await totals.settled();
    expect(await totals.count("finding=hum", after.how)).toEqual({ total: 48_325, exact: true });
  });

  it("runs one background count at a time, so a burst of new filters cannot pile counts up", async () => {
    const { sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const a = counter(10_000, 9_000, 30);
    const b = counter(20_000, 19_000, 30);
    await totals.count("verdict=warn", a.how);
    await totals.count("verdict=fail", b.how);
    expect([a.calls.count, b.calls.count]).toEqual([1, 0]);
    await totals.settled();
    // The skipped filter is counted when it is asked for again.
    expect(await totals.count("verdict=fail", b.how)).toEqual({ total: 19_000, exact: false });
    await totals.settled();
    expect(await totals.count("verdict=fail", b.how)).toEqual({ total: 20_000, exact: true });
  });

  it("uses a version the caller has read already instead of reading it again", async () => {
    let reads = 0;
    const sequelize = { query: async () => (reads++, [{ version: "1" }]) } as unknown as Sequelize;
    const totals = createListTotals(sequelize);
    const c = counter(480, 500);
    expect(await totals.count("batch=3", c.how, "1")).toEqual({ total: 480, exact: true });
    expect(await totals.count("batch=3", c.how, "1")).toEqual({ total: 480, exact: true });
    expect(reads).toBe(0);
    expect(c.calls.count).toBe(1);
    // A newer version from the caller is a change: the total is counted again.
    expect(await totals.count("batch=3", c.how, "2")).toEqual({ total: 480, exact: true });
    expect(c.calls.count).toBe(2);
    // Without one, the totals read it themselves.
    await totals.count("batch=3", c.how);
    expect(reads).toBe(1);
  });

  it("counts a small set with the inline count and a large one with the background count", async () => {
    const { sequelize } = fakeDb();
    const totals = createListTotals(sequelize);
    const used: string[] = [];
    const how = (estimate: number) => ({
      count: async () => (used.push("background"), estimate + 1),
      countInline: async () => (used.push("inline"), estimate - 1),
      estimate: async () => estimate,
    });
    expect(await totals.count("batch=3", how(480))).toEqual({ total: 479, exact: true });
    expect(await totals.count("finding=hum", how(47_900))).toEqual({ total: 47_900, exact: false });
    await totals.settled();
    expect(used).toEqual(["inline", "background"]);
  });

  it("reports a failed background count and keeps answering with the estimate", async () => {
    const { sequelize } = fakeDb();
    const errors: string[] = [];
    const totals = createListTotals(sequelize, (m) => errors.push(m));
    const how = { count: async () => Promise.reject(new Error("statement timeout")), estimate: async () => 90_000 };
    expect(await totals.count("q=reel", how)).toEqual({ total: 90_000, exact: false });
    await totals.settled();
    expect(errors).toEqual(["counting files for q=reel: statement timeout"]);
    expect(await totals.count("q=reel", how)).toEqual({ total: 90_000, exact: false });
  });
});
