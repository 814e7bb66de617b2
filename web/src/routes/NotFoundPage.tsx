import { Link } from "react-router-dom";

export function NotFoundPage() {
  return (
    <section className="mx-auto max-w-xl py-16 text-center">
      <p className="font-mono text-sm text-ink-muted">404</p>
      <h1 className="mt-2 text-3xl">Nothing at this address</h1>
      <p className="mt-3 text-ink-muted">The page may have moved, or the link was mistyped.</p>
      <p className="mt-6">
        <Link to="/batches" className="text-harbour underline underline-offset-2">
          Go to the batches
        </Link>
      </p>
    </section>
  );
}
