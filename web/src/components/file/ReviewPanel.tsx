import { useImperativeHandle, useRef, useState, type FormEvent, type Ref } from "react";
import type { FileDetailDto, ReviewState } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useSaveReview } from "../../api/files.ts";
import { useCan } from "../../auth/currentUser.ts";
import { formatDateTime } from "../../format/units.ts";
import { ReviewStateBadge } from "../badges.tsx";
import { buttonClass, SelectField, TextField } from "../fields.tsx";
import { reviewStateOptions } from "../ReviewStateSelect.tsx";
import { InlineError } from "../states.tsx";

/** Sending a file back or flagging it asks the reviewer to say why; accepting does not (the server agrees). */
export function reasonRequired(state: ReviewState): boolean {
  return state === "flagged" || state === "retransfer";
}

/** What the page's shortcuts may ask of the review form. */
export interface ReviewHandle {
  /** Picks a state and puts the cursor in the reason box; Enter then saves. */
  start: (state: ReviewState) => void;
}

function ReviewForm({ file, ref }: { file: FileDetailDto; ref?: Ref<ReviewHandle> }) {
  const [reviewState, setReviewState] = useState<ReviewState>(file.reviewState === "pending" ? "accepted" : file.reviewState);
  const [reason, setReason] = useState("");
  const save = useSaveReview(file.id);
  const reasonInput = useRef<HTMLInputElement>(null);
  const required = reasonRequired(reviewState);

  useImperativeHandle(ref, () => ({
    start: (state) => {
      setReviewState(state);
      reasonInput.current?.focus();
    },
  }));

  function submit(event: FormEvent) {
    event.preventDefault();
    if (required && !reason.trim()) return;
    save.mutate({ reviewState, reason: reason.trim() }, { onSuccess: () => setReason("") });
  }

  return (
    <form onSubmit={submit} aria-label="Change review state" className="mt-3 space-y-2 border-t border-line pt-3">
      <SelectField label="New review state" value={reviewState} onChange={(e) => setReviewState(e.target.value as ReviewState)}>
        {reviewStateOptions()}
      </SelectField>
      <TextField
        ref={reasonInput}
        label="Reason"
        hint={required ? "(required to flag or send back; kept in the review history)" : "(optional; kept in the review history)"}
        required={required}
        value={reason}
        onChange={(e) => setReason(e.target.value)}
      />
      {save.isError && <InlineError message={`The review state was not changed: ${describeError(save.error)}`} />}
      <button type="submit" className={buttonClass.primary} disabled={save.isPending || (required && !reason.trim()) || reviewState === file.reviewState}>
        {save.isPending ? "Saving…" : "Save review state"}
      </button>
    </form>
  );
}

export function ReviewPanel({ file, ref }: { file: FileDetailDto; ref?: Ref<ReviewHandle> }) {
  const canReview = useCan("review");
  const events = file.reviewEvents;
  return (
    <section aria-labelledby="review-heading" className="rounded-md border border-line bg-surface p-3">
      <h2 id="review-heading" className="text-lg">
        Review
      </h2>
      <p className="mt-1 flex items-center gap-2 text-sm">
        Current state: <ReviewStateBadge state={file.reviewState} />
      </p>
      {canReview && <ReviewForm file={file} ref={ref} />}
      <h3 className="mt-3 text-sm font-semibold">History</h3>
      {events.length === 0 ? (
        <p className="text-sm text-ink-muted">No review changes yet.</p>
      ) : (
        <ol className="mt-1 space-y-2 text-sm">
          {events.map((event) => (
            <li key={event.id}>
              <span className="font-medium">{event.actor.name || event.actor.email}</span> set{" "}
              <ReviewStateBadge state={event.toState} /> <span className="text-ink-muted">(was {event.fromState}) · {formatDateTime(event.createdAt)}</span>
              {event.reason && <p className="text-ink-muted italic">“{event.reason}”</p>}
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}
