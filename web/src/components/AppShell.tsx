import { NavLink, Outlet, useNavigate } from "react-router-dom";
import { useSignOut } from "../api/session.ts";
import { useCurrentUser } from "../auth/currentUser.ts";
import { can, type Permission } from "../auth/permissions.ts";
import { TidemarkLogo } from "./icons.tsx";

const NAV: { to: string; label: string; permission?: Permission }[] = [
  { to: "/batches", label: "Batches" },
  { to: "/files", label: "Files" },
  { to: "/runs", label: "Runs" },
  { to: "/exports", label: "Exports", permission: "export" },
  { to: "/audit", label: "Audit trail", permission: "audit" },
  { to: "/tokens", label: "API tokens", permission: "ownTokens" },
  { to: "/users", label: "Users", permission: "manageUsers" },
];

function navClass({ isActive }: { isActive: boolean }): string {
  const base = "rounded px-2 py-1.5 lg:px-2.5 text-sm font-medium whitespace-nowrap";
  return isActive ? `${base} bg-white/15 text-white underline decoration-2 underline-offset-6` : `${base} text-white/90 hover:bg-white/10 hover:text-white`;
}

function SignOutButton() {
  const signOut = useSignOut();
  const navigate = useNavigate();
  return (
    <button
      type="button"
      className="rounded border border-white/40 px-2.5 py-1 text-sm text-white hover:bg-white/10"
      disabled={signOut.isPending}
      onClick={() => signOut.mutate(undefined, { onSettled: () => void navigate("/sign-in", { replace: true }) })}
    >
      Sign out
    </button>
  );
}

export function AppShell() {
  const user = useCurrentUser();
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:rounded focus:bg-surface focus:px-3 focus:py-2">
        Skip to content
      </a>
      <header className="bg-harbour-strong text-white [&_:focus-visible]:outline-white">
        <div className="mx-auto flex max-w-screen-2xl flex-wrap items-center gap-x-4 gap-y-2 px-4 py-2 lg:gap-x-6">
          <NavLink to="/batches" className="flex items-center gap-2 rounded">
            <TidemarkLogo className="text-white" />
            <span className="font-serif text-xl font-semibold tracking-tight">Tidemark</span>
          </NavLink>
          <nav aria-label="Main" className="flex flex-1 flex-wrap items-center gap-1">
            {NAV.filter((item) => !item.permission || can(user.role, item.permission)).map((item) => (
              <NavLink key={item.to} to={item.to} className={navClass}>
                {item.label}
              </NavLink>
            ))}
          </nav>
          <div className="flex items-center gap-3 text-sm">
            <span>
              <span className="hidden font-medium lg:inline">{user.name || user.email}</span>
              <span title={user.email} className="ml-1.5 rounded bg-white/15 px-1.5 py-0.5 text-xs uppercase tracking-wide">{user.role}</span>
            </span>
            <SignOutButton />
          </div>
        </div>
      </header>
      <main id="main" className="mx-auto max-w-screen-2xl px-4 py-5">
        <Outlet />
      </main>
    </div>
  );
}
