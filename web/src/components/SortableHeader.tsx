import type { ReactNode } from "react";
import { SortAscIcon, SortDescIcon, SortNoneIcon } from "./icons.tsx";

export type SortOrder = "asc" | "desc";

interface SortableHeaderProps<K extends string> {
  sortKey: K;
  activeKey: K | undefined;
  order: SortOrder;
  onSort: (key: K, order: SortOrder) => void;
  children: ReactNode;
  className?: string;
}

/** A column header button; clicking the active column flips the order, another column starts ascending. */
export function SortableHeader<K extends string>({ sortKey, activeKey, order, onSort, children, className = "" }: SortableHeaderProps<K>) {
  const isActive = sortKey === activeKey;
  const ariaSort = isActive ? (order === "asc" ? "ascending" : "descending") : "none";
  const next: SortOrder = isActive && order === "asc" ? "desc" : "asc";
  return (
    <th scope="col" aria-sort={ariaSort} className={`px-1.5 py-2 text-left font-semibold lg:px-2 ${className}`}>
      <button type="button" onClick={() => onSort(sortKey, next)} className="inline-flex items-center gap-1 rounded hover:text-harbour">
        {children}
        {isActive ? order === "asc" ? <SortAscIcon /> : <SortDescIcon /> : <SortNoneIcon />}
      </button>
    </th>
  );
}
