import { ChevronLeftIcon, ChevronRightIcon } from "./icons.tsx";
import { buttonClass } from "./fields.tsx";
import { PAGE_SIZES } from "./listSearch.ts";

interface PaginationProps {
  page: number;
  pageSize: number;
  total: number;
  noun: string;
  onPageChange: (page: number) => void;
  onPageSizeChange?: (pageSize: number) => void;
}

export function Pagination({ page, pageSize, total, noun, onPageChange, onPageSizeChange }: PaginationProps) {
  const pageCount = Math.max(1, Math.ceil(total / pageSize));
  const first = total === 0 ? 0 : (page - 1) * pageSize + 1;
  const last = Math.min(total, page * pageSize);
  return (
    <nav aria-label={`Pages of ${noun}`} className="flex flex-wrap items-center justify-between gap-3 py-3 text-sm">
      <p aria-live="polite">
        {total === 0 ? `No ${noun}` : `${first}–${last} of ${total} ${noun}`} · page {page} of {pageCount}
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
        <button type="button" className={buttonClass.secondary} disabled={page >= pageCount} onClick={() => onPageChange(page + 1)}>
          Next <ChevronRightIcon />
        </button>
      </div>
    </nav>
  );
}
