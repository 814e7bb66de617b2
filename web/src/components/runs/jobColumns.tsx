/** The columns a jobs table can show. */
import type { ReactNode } from "react";
import type { ScanJobDto } from "@tidemark/shared/types/api";
import { formatDateTime } from "../../format/units.ts";

export interface JobColumn {
  header: string;
  cell: (job: ScanJobDto) => ReactNode;
  className?: string;
}

export const jobColumns = {
  path: { header: "File", cell: (j) => <span className="font-mono text-xs break-all">{j.path}</span> },
  attempts: { header: "Attempts", cell: (j) => j.attempts, className: "text-right" },
  worker: { header: "Worker", cell: (j) => <span className="font-mono text-xs">{j.worker ?? "—"}</span> },
  lastError: { header: "Last error", cell: (j) => <span className="text-sm">{j.lastError ?? "—"}</span> },
  claimedAt: { header: "Claimed", cell: (j) => <span className="whitespace-nowrap">{formatDateTime(j.claimedAt)}</span> },
  updatedAt: { header: "Failed", cell: (j) => <span className="whitespace-nowrap">{formatDateTime(j.updatedAt)}</span> },
} satisfies Record<string, JobColumn>;

