import { ChevronLeftIcon, ChevronRightIcon } from "./icons.tsx";
import { buttonClass } from "./fields.tsx";
import { roughly } from "../format/approximate.ts";
import { PAGE_SIZES } from "./listSearch.ts";

interface PaginationProps {
  page: number;
  pageSize: number;
  total: number;
  noun: string;
  onPageChange: (page: number) => void;
  onPageSizeChange?: (pageSize: number) => void;
  /** The total is the server's estimate: shown as "about", rounded. */
  totalIsEstimate?: boolean;
  /** Whether a next page exists, when the server says so (cursor lists); otherwise the total decides. */
  hasNext?: boolean;
  /** Rows on this page, when known: with an estimated total, the last row's number comes from it. */
  itemCount?: number;
}

export function Pagination({ page, pageSize, total, noun, onPageChange, onPageSizeChange, totalIsEstimate = false, hasNext, itemCount }: PaginationProps) {
  const pageCount = Math.max(1, Math.ceil(total / pageSize));
  const first = total === 0 ? 0 : (page - 1) * pageSize + 1;
  const last = totalIsEstimate && itemCount !== undefined ? first + itemCount - 1 : Math.min(total, page * pageSize);
  const about = totalIsEstimate ? "about " : "";
  const shownTotal = totalIsEstimate ? roughly(total) : String(total);
  const shownPages = totalIsEstimate ? roughly(pageCount) : String(pageCount);
  return (
    <nav aria-label={`Pages of ${noun}`} className="flex flex-wrap items-center justify-between gap-3 py-3 text-sm">
      <p aria-live="polite">
        {total === 0 && !totalIsEstimate ? `No ${noun}` : `${first}–${last} of ${about}${shownTotal} ${noun}`} · page {page} of {about}
        {shownPages}
      </p>
      <div className="flex items-center gap-2">
        {onPageSizeChange && (
          <label className="flex items-center gap-1.5">
            <span>Rows per page</span>
            <select
              value={pageSize}
              onChange={(e) => onPageSizeChange(Number(e.target.value))}
              className="rounded border border-line-strong bg-surface px-1.5 py-1"
            >
              {PAGE_SIZES.map((size) => (
                <option key={size} value={size}>
                  {size}
                </option>
              ))}
            </select>
          </label>
        )}
        <button type="button" className={buttonClass.secondary} disabled={page <= 1} onClick={() => onPageChange(page - 1)}>
          <ChevronLeftIcon /> Previous
        </button>
        <button type="button" className={buttonClass.secondary} disabled={hasNext === undefined ? page >= pageCount : !hasNext} onClick={() => onPageChange(page + 1)}>
          Next <ChevronRightIcon />
        </button>
      </div>
    </nav>
  );
}
