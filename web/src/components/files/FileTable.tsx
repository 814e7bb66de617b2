import { Link } from "react-router-dom";
import type { FileSortKey, FileSummaryDto } from "@tidemark/shared/types/api";
import { FindingChips, ReviewStateBadge, VerdictBadge } from "../badges.tsx";
import { SortableHeader, type SortOrder } from "../SortableHeader.tsx";
import { formatAudioFormat, formatDuration, formatOptionalLevel } from "../../format/units.ts";

interface FileTableProps {
  items: FileSummaryDto[];
  activeIndex: number;
  onActivate: (index: number) => void;
  sort: FileSortKey | undefined;
  order: SortOrder;
  onSort: (key: FileSortKey, order: SortOrder) => void;
  /** Present only for roles that may change review states. */
  selection?: { ids: ReadonlySet<number>; onToggle: (id: number) => void; onToggleAll: () => void };
  isRefreshing: boolean;
  /** The list's query string ("?batch=3&…" or ""), carried into each file's address for previous/next. */
  linkSearch?: string;
}

export function FileTable({ items, activeIndex, onActivate, sort, order, onSort, selection, isRefreshing, linkSearch = "" }: FileTableProps) {
  const allSelected = selection !== undefined && items.length > 0 && items.every((f) => selection.ids.has(f.id));
  const header = (key: FileSortKey, label: string, className?: string) => (
    <SortableHeader sortKey={key} activeKey={sort} order={order} onSort={onSort} className={className}>
      {label}
    </SortableHeader>
  );
  return (
    <div className="overflow-x-auto rounded-md border border-line bg-surface">
      <table className={`w-full min-w-[680px] text-sm ${isRefreshing ? "opacity-60" : ""}`} aria-busy={isRefreshing}>
        <caption className="sr-only">Files, {items.length} shown. Press j or k to move between rows and Enter to open one.</caption>
        <thead className="border-b border-line bg-sunken text-ink">
          <tr>
            {selection && (
              <th scope="col" className="w-8 px-1.5 py-2 lg:px-2">
                <input type="checkbox" aria-label="Select all files on this page" checked={allSelected} onChange={selection.onToggleAll} className="size-4 accent-harbour" />
              </th>
            )}
            {header("path", "Path")}
            {header("durationSeconds", "Length", "hidden text-right lg:table-cell")}
            <th scope="col" className="hidden px-2 py-2 text-left font-semibold lg:table-cell">
              Format
            </th>
            {header("verdict", "Verdict")}
            {header("reviewState", "Review")}
            <th scope="col" className="px-2 py-2 text-left font-semibold">
              Worst findings
            </th>
            {header("integratedLufs", "Loudness LUFS", "text-right")}
            {header("truePeakDbtp", "True peak dBTP", "text-right")}
          </tr>
        </thead>
        <tbody>
          {items.map((file, index) => {
            const isActive = index === activeIndex;
            const isSelected = selection?.ids.has(file.id) ?? false;
            return (
              <tr
                key={file.id}
                data-list-row
                aria-current={isActive ? "true" : undefined}
                onClick={() => onActivate(index)}
                className={`border-b border-line last:border-b-0 ${isActive ? "bg-harbour-soft shadow-[inset_4px_0_0_var(--color-harbour)]" : isSelected ? "bg-warn-soft/50" : "hover:bg-paper"}`}
              >
                {selection && (
                  <td className="px-1.5 py-1.5 lg:px-2">
                    <input type="checkbox" aria-label={`Select ${file.path}`} checked={isSelected} onChange={() => selection.onToggle(file.id)} className="size-4 accent-harbour" />
                  </td>
                )}
                <td className="max-w-[13rem] px-1.5 py-1.5 lg:px-2 lg:max-w-[24rem]">
                  <Link to={`/files/${file.id}${linkSearch}`} onFocus={() => onActivate(index)} className="block truncate font-medium text-harbour-strong underline-offset-2 hover:underline" title={file.path}>
                    {file.path}
                  </Link>
                  <span className="block truncate text-xs text-ink-muted">{file.collection.name}</span>
                </td>
                <td className="hidden px-1.5 py-1.5 text-right lg:table-cell lg:px-2">{formatDuration(file.durationSeconds)}</td>
                <td className="hidden px-1.5 py-1.5 lg:px-2 whitespace-nowrap lg:table-cell">{formatAudioFormat(file.format)}</td>
                <td className="px-1.5 py-1.5 lg:px-2">
                  <VerdictBadge verdict={file.verdict} />
                </td>
                <td className="px-1.5 py-1.5 lg:px-2">
                  <ReviewStateBadge state={file.reviewState} />
                </td>
                <td className="px-1.5 py-1.5 lg:px-2">
                  <FindingChips findings={file.worstFindings} max={2} />
                </td>
                <td className="px-1.5 py-1.5 lg:px-2 text-right whitespace-nowrap">{formatOptionalLevel(file.integratedLufs, "")}</td>
                <td className="px-1.5 py-1.5 lg:px-2 text-right whitespace-nowrap">{formatOptionalLevel(file.truePeakDbtp, "")}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
