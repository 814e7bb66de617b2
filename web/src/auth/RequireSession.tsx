import type { ReactNode } from "react";
import { Navigate, useLocation } from "react-router-dom";
import { useSession } from "../api/session.ts";
import { describeError } from "../api/client.ts";
import { CurrentUserContext } from "./currentUser.ts";
import { signInPath } from "./returnPath.ts";
import { LoadingState, ErrorState } from "../components/states.tsx";

export function RequireSession({ children }: { children: ReactNode }) {
  const session = useSession();
  const location = useLocation();

  if (session.isPending) return <LoadingState label="Checking your session" />;
  if (session.isError) {
    return <ErrorState title="Could not check your session" message={describeError(session.error)} onRetry={() => void session.refetch()} />;
  }
  const { user, expired } = session.data;
  if (!user) {
    return <Navigate to={signInPath(location.pathname + location.search, expired)} replace />;
  }
  return <CurrentUserContext.Provider value={user}>{children}</CurrentUserContext.Provider>;
}
