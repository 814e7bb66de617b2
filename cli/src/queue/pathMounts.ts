/**
 * `--mount FROM=TO`: the shared storage mounted somewhere else on this machine. A job's path that starts
 * with FROM (as the enqueuing machine saw it) is read from TO instead; the report path is unchanged.
 */
import path from "node:path";
import { InvalidArgumentError } from "commander";

export interface PathMount {
  from: string;
  to: string;
}

export function parseMount(value: string, previous: PathMount[] = []): PathMount[] {
  const at = value.indexOf("=");
  const from = at > 0 ? value.slice(0, at).replace(/\/+$/, "") : "";
  const to = at > 0 ? value.slice(at + 1).replace(/\/+$/, "") : "";
  if (!from || !to || !path.isAbsolute(to)) {
    throw new InvalidArgumentError(`expected ENQUEUED_PREFIX=LOCAL_PREFIX with an absolute local folder, e.g. /mnt/archive=/Volumes/archive, got "${value}".`);
  }
  return [...previous, { from, to }];
}

/** The longest matching prefix wins, and only at a folder boundary (/mnt/a does not match /mnt/ab). */
export function localPath(absPath: string, mounts: readonly PathMount[]): string {
  let best: PathMount | null = null;
  for (const m of mounts) {
    if ((absPath === m.from || absPath.startsWith(`${m.from}/`)) && (!best || m.from.length > best.from.length)) best = m;
  }
  return best ? best.to + absPath.slice(best.from.length) : absPath;
}
