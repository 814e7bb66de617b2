import { REVIEW_STATES, type ReviewState } from "@tidemark/shared/types/api";

/** Words that say what each state asks of the team, used in the review controls. */
export const REVIEW_STATE_MEANING: Record<ReviewState, string> = {
  pending: "not looked at yet",
  accepted: "fine as it is",
  flagged: "needs a second look",
  retransfer: "digitise the carrier again",
};

export function reviewStateOptions() {
  return REVIEW_STATES.map((state) => (
    <option key={state} value={state}>
      {state} — {REVIEW_STATE_MEANING[state]}
    </option>
  ));
}
