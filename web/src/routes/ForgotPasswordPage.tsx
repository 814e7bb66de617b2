import { useState, type FormEvent } from "react";
import { Link } from "react-router-dom";
import { describeError } from "../api/client.ts";
import { useRequestPasswordReset } from "../api/session.ts";
import { AuthCard } from "../components/AuthCard.tsx";
import { buttonClass, TextField } from "../components/fields.tsx";
import { InlineError } from "../components/states.tsx";

export function ForgotPasswordPage() {
  const [email, setEmail] = useState("");
  const request = useRequestPasswordReset();

  function submit(event: FormEvent) {
    event.preventDefault();
    request.mutate({ email: email.trim() });
  }

  return (
    <AuthCard title="Reset your password">
      {request.isSuccess ? (
        <p role="status">
          If an account uses <strong>{email.trim()}</strong>, a reset link is on its way. The link works once and expires soon.
        </p>
      ) : (
        <form onSubmit={submit} className="space-y-3">
          <p className="text-sm text-ink-muted">Enter the e-mail you sign in with; we will send a link to choose a new password.</p>
          <TextField label="E-mail" type="email" autoComplete="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
          {request.isError && <InlineError message={describeError(request.error)} />}
          <button type="submit" className={`${buttonClass.primary} w-full`} disabled={request.isPending || !email.trim()}>
            {request.isPending ? "Sending…" : "Send reset link"}
          </button>
        </form>
      )}
      <p className="mt-4 text-sm">
        <Link to="/sign-in" className="text-harbour underline underline-offset-2">
          Back to sign-in
        </Link>
      </p>
    </AuthCard>
  );
}
