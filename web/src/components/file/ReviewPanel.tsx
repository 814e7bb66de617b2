import { useState, type FormEvent } from "react";
import type { FileDetailDto, ReviewState } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useSaveReview } from "../../api/files.ts";
import { useCan } from "../../auth/currentUser.ts";
import { formatDateTime } from "../../format/units.ts";
import { ReviewStateBadge } from "../badges.tsx";
import { buttonClass, SelectField, TextAreaField } from "../fields.tsx";
import { reviewStateOptions } from "../ReviewStateSelect.tsx";
import { InlineError } from "../states.tsx";

function ReviewForm({ file }: { file: FileDetailDto }) {
  const [reviewState, setReviewState] = useState<ReviewState>(file.reviewState === "pending" ? "accepted" : file.reviewState);
  const [reason, setReason] = useState("");
  const save = useSaveReview(file.id);

  function submit(event: FormEvent) {
    event.preventDefault();
    save.mutate({ reviewState, reason: reason.trim() }, { onSuccess: () => setReason("") });
  }

  return (
    <form onSubmit={submit} aria-label="Change review state" className="mt-3 space-y-2 border-t border-line pt-3">
      <SelectField label="New review state" value={reviewState} onChange={(e) => setReviewState(e.target.value as ReviewState)}>
        {reviewStateOptions()}
      </SelectField>
      <TextAreaField label="Reason" hint="(kept in the review history)" rows={2} required value={reason} onChange={(e) => setReason(e.target.value)} />
      {save.isError && <InlineError message={`The review state was not changed: ${describeError(save.error)}`} />}
      <button type="submit" className={buttonClass.primary} disabled={save.isPending || !reason.trim() || reviewState === file.reviewState}>
        {save.isPending ? "Saving…" : "Save review state"}
      </button>
    </form>
  );
}

export function ReviewPanel({ file }: { file: FileDetailDto }) {
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
      {canReview && <ReviewForm file={file} />}
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
