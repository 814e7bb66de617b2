/** Where to go after sign-in: only same-site paths, so a crafted link cannot send users elsewhere. */
export function safeReturnPath(next: string | null): string {
  if (!next || !next.startsWith("/") || next.startsWith("//") || next.startsWith("/\\")) return "/";
  if (next.startsWith("/sign-in")) return "/";
  return next;
}

export function signInPath(returnTo: string, expired: boolean): string {
  const params = new URLSearchParams({ next: returnTo });
  if (expired) params.set("reason", "expired");
  return `/sign-in?${params.toString()}`;
}
