import { useState, type FormEvent } from "react";
import type { ReviewState } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useBulkReview } from "../../api/files.ts";
import { buttonClass, SelectField, TextField } from "../fields.tsx";
import { InlineError } from "../states.tsx";
import { reviewStateOptions } from "../ReviewStateSelect.tsx";
import { reasonRequired } from "../file/ReviewPanel.tsx";

interface BulkReviewBarProps {
  ids: number[];
  onDone: () => void;
  onClear: () => void;
}

export function BulkReviewBar({ ids, onDone, onClear }: BulkReviewBarProps) {
  const [reviewState, setReviewState] = useState<ReviewState>("accepted");
  const [reason, setReason] = useState("");
  const bulk = useBulkReview();
  const required = reasonRequired(reviewState);

  function submit(event: FormEvent) {
    event.preventDefault();
    bulk.mutate({ ids, reviewState, reason: reason.trim() }, { onSuccess: () => { setReason(""); onDone(); } });
  }

  return (
    <form onSubmit={submit} aria-label="Change review state of selected files" className="mb-3 rounded-md border border-harbour/40 bg-harbour-soft p-3">
      <div className="flex flex-wrap items-end gap-3">
        <p className="self-center font-medium">
          {ids.length} {ids.length === 1 ? "file" : "files"} selected
        </p>
        <SelectField label="New review state" value={reviewState} onChange={(e) => setReviewState(e.target.value as ReviewState)} className="w-72">
          {reviewStateOptions()}
        </SelectField>
        <TextField
          label="Reason"
          hint={required ? "(required)" : "(optional)"}
          required={required}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          placeholder="Why, for the review history"
          className="min-w-64 flex-1"
        />
        <button type="submit" className={buttonClass.primary} disabled={bulk.isPending || (required && !reason.trim())}>
          {bulk.isPending ? "Applying…" : `Apply to ${ids.length}`}
        </button>
        <button type="button" className={buttonClass.secondary} onClick={onClear}>
          Clear selection
        </button>
      </div>
      {bulk.isError && <InlineError message={`The review states were not changed: ${describeError(bulk.error)}`} />}
    </form>
  );
}
