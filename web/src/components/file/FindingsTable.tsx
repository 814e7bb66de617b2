import type { FindingDto } from "@tidemark/shared/types/api";
import { SeverityBadge } from "../badges.tsx";
import { formatTimestamp } from "../../format/units.ts";

interface FindingsTableProps {
  findings: FindingDto[];
  selectedId: number | null;
  onSelect: (id: number) => void;
}

function span(finding: FindingDto): string {
  if (finding.startSeconds === null) return "whole file";
  if (finding.endSeconds === null || finding.endSeconds === finding.startSeconds) return formatTimestamp(finding.startSeconds);
  return `${formatTimestamp(finding.startSeconds)} – ${formatTimestamp(finding.endSeconds)}`;
}

export function FindingsTable({ findings, selectedId, onSelect }: FindingsTableProps) {
  if (findings.length === 0) {
    return <p className="rounded-md border border-line bg-surface px-4 py-4 text-ink-muted">No findings: every check of the profile passed.</p>;
  }
  return (
    <div className="overflow-x-auto rounded-md border border-line bg-surface">
      <table className="w-full text-sm">
        <thead className="border-b border-line bg-sunken">
          <tr>
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              When
            </th>
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              Finding
            </th>
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              Severity
            </th>
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              Channel
            </th>
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              Detail
            </th>
          </tr>
        </thead>
        <tbody>
          {findings.map((finding) => {
            const isSelected = finding.id === selectedId;
            return (
              <tr key={finding.id} className={`border-b border-line last:border-b-0 ${isSelected ? "bg-harbour-soft shadow-[inset_4px_0_0_var(--color-harbour)]" : ""}`}>
                <td className="px-2 py-1.5 whitespace-nowrap">
                  <button
                    type="button"
                    aria-pressed={isSelected}
                    onClick={() => onSelect(finding.id)}
                    disabled={finding.startSeconds === null}
                    className="rounded font-mono text-harbour-strong underline underline-offset-2 disabled:text-ink-muted disabled:no-underline"
                    title={finding.startSeconds === null ? "Concerns the whole file: no marker" : "Open its close-up and mark it on the spectrogram"}
                  >
                    {span(finding)}
                  </button>
                </td>
                <td className="px-2 py-1.5 font-mono">{finding.code}</td>
                <td className="px-2 py-1.5">
                  <SeverityBadge severity={finding.severity} />
                </td>
                <td className="px-2 py-1.5">{finding.channel === null ? "all" : finding.channel + 1}</td>
                <td className="px-2 py-1.5">{finding.message}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
