import { useState, type FormEvent } from "react";
import { Link, Navigate, useNavigate, useSearchParams } from "react-router-dom";
import { ApiError, describeError } from "../api/client.ts";
import { useSession, useSignIn } from "../api/session.ts";
import { safeReturnPath } from "../auth/returnPath.ts";
import { AuthCard } from "../components/AuthCard.tsx";
import { buttonClass, TextField } from "../components/fields.tsx";
import { InlineError } from "../components/states.tsx";

function signInErrorMessage(error: unknown): string {
  if (error instanceof ApiError && error.status === 401) return "That e-mail and password do not match an account. Check both and try again.";
  return describeError(error);
}

export function SignInPage() {
  const [params] = useSearchParams();
  const next = safeReturnPath(params.get("next"));
  const expired = params.get("reason") === "expired";
  const session = useSession();
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [email, setEmail] = useState("");
  const [password, setPassword] = useState("");

  if (session.data?.user) return <Navigate to={next} replace />;

  function submit(event: FormEvent) {
    event.preventDefault();
    signIn.mutate({ email: email.trim(), password }, { onSuccess: () => void navigate(next, { replace: true }) });
  }

  return (
    <AuthCard title="Sign in">
      {expired && (
        <p role="status" className="mb-4 rounded border border-warn/40 bg-warn-soft px-3 py-2 text-sm text-ink">
          Your session ended. Sign in again to continue where you were.
        </p>
      )}
      <form onSubmit={submit} className="space-y-3" noValidate>
        <TextField label="E-mail" type="email" autoComplete="username" required value={email} onChange={(e) => setEmail(e.target.value)} />
        <TextField
          label="Password"
          type="password"
          autoComplete="current-password"
          required
          value={password}
          onChange={(e) => setPassword(e.target.value)}
        />
        {signIn.isError && <InlineError message={signInErrorMessage(signIn.error)} />}
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={signIn.isPending || !email || !password}>
          {signIn.isPending ? "Signing in…" : "Sign in"}
        </button>
      </form>
      <p className="mt-4 text-sm">
        <Link to="/forgot-password" className="text-harbour underline underline-offset-2">
          Forgot your password?
        </Link>
      </p>
    </AuthCard>
  );
}
