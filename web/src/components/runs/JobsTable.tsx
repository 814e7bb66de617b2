import type { ReactNode } from "react";
import type { ScanJobDto } from "@tidemark/shared/types/api";
import type { JobColumn } from "./jobColumns.tsx";

/** A plain table of jobs; `action` adds a last column (e.g. a retry button). */
export function JobsTable({ caption, jobs, columns, action }: { caption: string; jobs: ScanJobDto[]; columns: JobColumn[]; action?: (job: ScanJobDto) => ReactNode }) {
  return (
    <div className="overflow-x-auto rounded-md border border-line bg-surface">
      <table className="w-full min-w-[640px] text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead className="border-b border-line bg-sunken">
          <tr>
            {columns.map((c) => (
              <th key={c.header} scope="col" className={`px-2 py-2 text-left font-semibold ${c.className ?? ""}`}>
                {c.header}
              </th>
            ))}
            {action && (
              <th scope="col" className="px-2 py-2">
                <span className="sr-only">Actions</span>
              </th>
            )}
          </tr>
        </thead>
        <tbody>
          {jobs.map((job) => (
            <tr key={job.id} className="border-b border-line align-top last:border-b-0">
              {columns.map((c) => (
                <td key={c.header} className={`px-2 py-1.5 ${c.className ?? ""}`}>
                  {c.cell(job)}
                </td>
              ))}
              {action && <td className="px-2 py-1.5 text-right">{action(job)}</td>}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
