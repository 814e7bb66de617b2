import { once } from "node:events";
import type { Response } from "express";
import type { Stringifier } from "csv-stringify";

/**
 * Streams pages from `nextPage` through a CSV stringifier into the response, with backpressure, stopping
 * early if the client goes away. `nextPage` gets the last id seen (keyset paging) and returns rows.
 */
export async function streamCsv<Row extends { id: number }>(
  res: Response,
  csv: Stringifier,
  nextPage: (afterId: number) => Promise<Row[]>,
  toRecord: (row: Row) => Record<string, unknown>,
): Promise<void> {
  csv.pipe(res);
  let afterId = 0;
  let gone = false;
  res.once("close", () => {
    gone = true;
  });
  for (;;) {
    const rows = await nextPage(afterId);
    for (const row of rows) {
      if (gone) return;
      if (!csv.write(toRecord(row))) await once(csv, "drain");
    }
    if (rows.length === 0) break;
    afterId = rows[rows.length - 1].id;
  }
  csv.end();
  await once(res, "finish").catch(() => undefined);
}
