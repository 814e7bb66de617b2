import { useState, type FormEvent } from "react";
import { Link, useSearchParams } from "react-router-dom";
import { ApiError, describeError } from "../api/client.ts";
import { useConfirmPasswordReset } from "../api/session.ts";
import { AuthCard } from "../components/AuthCard.tsx";
import { buttonClass, TextField } from "../components/fields.tsx";
import { InlineError } from "../components/states.tsx";

// The server's policy (it re-checks); saying it up front saves a round trip.
const MIN_PASSWORD_LENGTH = 12;

function resetErrorMessage(error: unknown): string {
  if (error instanceof ApiError && (error.status === 400 || error.status === 404 || error.status === 410)) {
    return `${error.message} Reset links work once and expire; request a new one if needed.`;
  }
  return describeError(error);
}

export function ResetPasswordPage() {
  const [params] = useSearchParams();
  const token = params.get("token") ?? "";
  const [password, setPassword] = useState("");
  const [repeat, setRepeat] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const confirm = useConfirmPasswordReset();

  function submit(event: FormEvent) {
    event.preventDefault();
    if (password.length < MIN_PASSWORD_LENGTH) return setProblem(`Choose a password of at least ${MIN_PASSWORD_LENGTH} characters.`);
    if (password !== repeat) return setProblem("The two passwords are not the same.");
    setProblem(null);
    confirm.mutate({ token, password });
  }

  if (!token) {
    return (
      <AuthCard title="Choose a new password">
        <InlineError message="This link has no reset token. Open the link from the e-mail again, or request a new one." />
        <p className="mt-4 text-sm">
          <Link to="/forgot-password" className="text-harbour underline underline-offset-2">
            Request a new link
          </Link>
        </p>
      </AuthCard>
    );
  }

  return (
    <AuthCard title="Choose a new password">
      {confirm.isSuccess ? (
        <p role="status">
          Your password is changed.{" "}
          <Link to="/sign-in" className="text-harbour underline underline-offset-2">
            Sign in with it
          </Link>
          .
        </p>
      ) : (
        <form onSubmit={submit} className="space-y-3" noValidate>
          <TextField
            label="New password"
            hint={`(at least ${MIN_PASSWORD_LENGTH} characters)`}
            type="password"
            autoComplete="new-password"
            required
            value={password}
            onChange={(e) => setPassword(e.target.value)}
          />
          <TextField label="Repeat new password" type="password" autoComplete="new-password" required value={repeat} onChange={(e) => setRepeat(e.target.value)} />
          {problem && <InlineError message={problem} />}
          {confirm.isError && <InlineError message={resetErrorMessage(confirm.error)} />}
          <button type="submit" className={`${buttonClass.primary} w-full`} disabled={confirm.isPending}>
            {confirm.isPending ? "Saving…" : "Save new password"}
          </button>
        </form>
      )}
    </AuthCard>
  );
}
