/**
 * Peak resident memory of a whole process tree, sampled from /proc: the root's RSS plus every
 * descendant's (children found through /proc/<pid>/task/<tid>/children). A scan's worker threads live in
 * its own process, so GNU time's figure already holds them; this also counts any child process, which
 * wait4's ru_maxrss would not add up.
 */
import { readdir, readFile } from "node:fs/promises";

async function children(pid: number): Promise<number[]> {
  const tasks = await readdir(`/proc/${pid}/task`).catch(() => [] as string[]);
  const out: number[] = [];
  for (const tid of tasks) {
    const text = await readFile(`/proc/${pid}/task/${tid}/children`, "utf8").catch(() => "");
    for (const c of text.trim().split(/\s+/)) if (c) out.push(Number(c));
  }
  return out;
}

async function rssKb(pid: number): Promise<number> {
  const status = await readFile(`/proc/${pid}/status`, "utf8").catch(() => "");
  const m = /VmRSS:\s+(\d+)/.exec(status);
  return m ? Number(m[1]) : 0;
}

/** Sum of RSS over `root` and its descendants now, kB (0 once it has gone); `skipRoot` counts only the descendants. */
export async function treeRssKb(root: number, skipRoot = false): Promise<number> {
  let total = 0;
  const queue = [root];
  while (queue.length > 0) {
    const pid = queue.pop()!;
    if (!(skipRoot && pid === root)) total += await rssKb(pid);
    queue.push(...(await children(pid)));
  }
  return total;
}

/** Samples the tree every `intervalMs` until stop(); resolves to the largest sum seen, MB. */
export function watchTreeRss(root: number, o: { skipRoot?: boolean; intervalMs?: number } = {}): { stop(): Promise<number> } {
  const intervalMs = o.intervalMs ?? 20;
  let peakKb = 0;
  let running = true;
  const loop = (async () => {
    while (running) {
      peakKb = Math.max(peakKb, await treeRssKb(root, o.skipRoot));
      await new Promise((resolve) => setTimeout(resolve, intervalMs));
    }
  })();
  return {
    async stop() {
      running = false;
      await loop;
      return peakKb / 1024;
    },
  };
}
