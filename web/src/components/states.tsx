import type { ReactNode } from "react";

export function LoadingState({ label }: { label: string }) {
  return (
    <div role="status" aria-live="polite" className="flex items-center gap-3 px-4 py-8 text-ink-muted">
      <span aria-hidden="true" className="size-4 animate-spin rounded-full border-2 border-line border-t-harbour" />
      <span>{label}…</span>
    </div>
  );
}

export function ErrorState({ title, message, onRetry }: { title: string; message: string; onRetry?: () => void }) {
  return (
    <div role="alert" className="my-4 rounded-md border border-fail/40 bg-fail-soft px-4 py-3 text-ink">
      <p className="font-semibold text-fail">{title}</p>
      <p className="mt-1">{message}</p>
      {onRetry && (
        <button type="button" onClick={onRetry} className="mt-2 rounded border border-fail/50 bg-surface px-3 py-1 text-sm font-medium text-fail hover:bg-fail-soft">
          Try again
        </button>
      )}
    </div>
  );
}

export function EmptyState({ title, children }: { title: string; children?: ReactNode }) {
  return (
    <div className="my-4 rounded-md border border-dashed border-line-strong bg-surface px-6 py-8 text-center">
      <p className="font-serif text-lg font-semibold">{title}</p>
      {children && <p className="mx-auto mt-1 max-w-prose text-ink-muted">{children}</p>}
    </div>
  );
}

/** Small inline note under a form after a write failed or succeeded. */
export function InlineError({ message }: { message: string }) {
  return (
    <p role="alert" className="mt-2 text-sm font-medium text-fail">
      {message}
    </p>
  );
}
