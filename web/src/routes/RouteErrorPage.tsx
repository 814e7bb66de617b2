import { isRouteErrorResponse, Link, useRouteError } from "react-router-dom";

/** Last resort when a screen throws while rendering: say so, and offer a way back. */
export function RouteErrorPage() {
  const error = useRouteError();
  const detail = isRouteErrorResponse(error) ? `${error.status} ${error.statusText}` : error instanceof Error ? error.message : String(error);
  return (
    <main className="mx-auto max-w-xl px-4 py-16" role="alert">
      <h1 className="text-2xl">This screen could not be shown</h1>
      <p className="mt-3">The portal hit a problem it did not expect. Reloading usually helps; if it keeps happening, tell your administrator what you were doing.</p>
      <p className="mt-2 font-mono text-sm text-ink-muted">{detail}</p>
      <p className="mt-6">
        <Link to="/batches" className="text-harbour underline underline-offset-2">
          Back to the batches
        </Link>
      </p>
    </main>
  );
}
