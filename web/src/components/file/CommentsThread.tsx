import { useState, type FormEvent } from "react";
import type { CommentDto } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useAddComment } from "../../api/files.ts";
import { useCan } from "../../auth/currentUser.ts";
import { formatDateTime, formatTimestamp } from "../../format/units.ts";
import { buttonClass, TextAreaField } from "../fields.tsx";
import { InlineError } from "../states.tsx";

const MAX_COMMENT_LENGTH = 4000;

/** Where the open close-up's playhead is: the time (and soloed channel) a new comment can be anchored to. */
export interface CommentAnchor {
  seconds: number;
  channel: number | null;
}

export function anchorText(seconds: number, channel: number | null): string {
  return `${formatTimestamp(seconds)}${channel === null ? "" : `, channel ${channel + 1}`}`;
}

function CommentForm({ fileId, anchor }: { fileId: number; anchor: CommentAnchor | null }) {
  const [body, setBody] = useState("");
  const [atPlayhead, setAtPlayhead] = useState(true);
  const add = useAddComment(fileId);
  function submit(event: FormEvent) {
    event.preventDefault();
    const anchored = atPlayhead && anchor !== null;
    // Unanchored comments send the body alone, as before anchors existed.
    add.mutate(anchored ? { body: body.trim(), atSeconds: anchor.seconds, channel: anchor.channel } : { body: body.trim() }, { onSuccess: () => setBody("") });
  }
  return (
    <form onSubmit={submit} className="mt-3">
      <TextAreaField label="Add a comment" rows={3} maxLength={MAX_COMMENT_LENGTH} value={body} onChange={(e) => setBody(e.target.value)} placeholder="What you heard or saw, and where" />
      {anchor && (
        <label className="mt-1 flex items-center gap-1.5 text-sm">
          <input type="checkbox" checked={atPlayhead} onChange={(e) => setAtPlayhead(e.target.checked)} />
          Comment at playhead ({anchorText(anchor.seconds, anchor.channel)})
        </label>
      )}
      {add.isError && <InlineError message={`The comment was not saved: ${describeError(add.error)}`} />}
      <button type="submit" className={`${buttonClass.primary} mt-2`} disabled={add.isPending || !body.trim()}>
        {add.isPending ? "Posting…" : "Post comment"}
      </button>
    </form>
  );
}

interface CommentsThreadProps {
  fileId: number;
  comments: CommentDto[];
  /** The open close-up's playhead, or null when none is open. */
  anchor?: CommentAnchor | null;
  /** Moves the close-up and playhead to an anchored comment's time. */
  onJump?: (seconds: number, channel: number | null) => void;
  /** Whether a close-up covers this time; otherwise the anchor is shown as plain text. */
  canJump?: (seconds: number) => boolean;
}

export function CommentsThread({ fileId, comments, anchor = null, onJump, canJump = () => true }: CommentsThreadProps) {
  const canComment = useCan("comment");
  return (
    <section aria-labelledby="comments-heading" className="rounded-md border border-line bg-surface p-3">
      <h2 id="comments-heading" className="mb-2 text-lg">
        Comments <span className="font-sans text-sm font-normal text-ink-muted">({comments.length})</span>
      </h2>
      {comments.length === 0 ? (
        <p className="text-sm text-ink-muted">No comments yet.</p>
      ) : (
        <ol className="space-y-3">
          {comments.map((comment) => (
            <li key={comment.id} className="border-l-2 border-harbour/40 pl-3">
              <p className="text-xs text-ink-muted">
                <span className="font-semibold text-ink">{comment.author.name || comment.author.email}</span> · {formatDateTime(comment.createdAt)}
              </p>
              {comment.atSeconds !== null && comment.atSeconds !== undefined && !canJump(comment.atSeconds) && (
                <p className="mt-0.5 font-mono text-xs text-ink-muted">at {anchorText(comment.atSeconds, comment.channel ?? null)} (no close-up covers this moment)</p>
              )}
              {comment.atSeconds !== null && comment.atSeconds !== undefined && canJump(comment.atSeconds) && (
                <button
                  type="button"
                  onClick={() => onJump?.(comment.atSeconds as number, comment.channel ?? null)}
                  className="mt-0.5 font-mono text-xs text-harbour-strong underline underline-offset-2"
                  aria-label={`Go to ${anchorText(comment.atSeconds, comment.channel ?? null)} in the close-up`}
                >
                  at {anchorText(comment.atSeconds, comment.channel ?? null)}
                </button>
              )}
              <p className="mt-0.5 whitespace-pre-wrap text-sm">{comment.body}</p>
            </li>
          ))}
        </ol>
      )}
      {canComment ? <CommentForm fileId={fileId} anchor={anchor} /> : <p className="mt-3 text-xs text-ink-muted">Your role can read comments but not add them.</p>}
    </section>
  );
}
