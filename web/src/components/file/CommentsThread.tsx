import { useState, type FormEvent } from "react";
import type { CommentDto } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useAddComment } from "../../api/files.ts";
import { useCan } from "../../auth/currentUser.ts";
import { formatDateTime } from "../../format/units.ts";
import { buttonClass, TextAreaField } from "../fields.tsx";
import { InlineError } from "../states.tsx";

const MAX_COMMENT_LENGTH = 4000;

function CommentForm({ fileId }: { fileId: number }) {
  const [body, setBody] = useState("");
  const add = useAddComment(fileId);
  function submit(event: FormEvent) {
    event.preventDefault();
    add.mutate({ body: body.trim() }, { onSuccess: () => setBody("") });
  }
  return (
    <form onSubmit={submit} className="mt-3">
      <TextAreaField label="Add a comment" rows={3} maxLength={MAX_COMMENT_LENGTH} value={body} onChange={(e) => setBody(e.target.value)} placeholder="What you heard or saw, and where" />
      {add.isError && <InlineError message={`The comment was not saved: ${describeError(add.error)}`} />}
      <button type="submit" className={`${buttonClass.primary} mt-2`} disabled={add.isPending || !body.trim()}>
        {add.isPending ? "Posting…" : "Post comment"}
      </button>
    </form>
  );
}

export function CommentsThread({ fileId, comments }: { fileId: number; comments: CommentDto[] }) {
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
              <p className="mt-0.5 whitespace-pre-wrap text-sm">{comment.body}</p>
            </li>
          ))}
        </ol>
      )}
      {canComment ? <CommentForm fileId={fileId} /> : <p className="mt-3 text-xs text-ink-muted">Your role can read comments but not add them.</p>}
    </section>
  );
}
