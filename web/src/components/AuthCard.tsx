import type { ReactNode } from "react";
import { TidemarkLogo } from "./icons.tsx";

/** The frame of the signed-out screens: a quiet card on paper. */
export function AuthCard({ title, children }: { title: string; children: ReactNode }) {
  return (
    <main className="flex min-h-screen items-start justify-center px-4 pt-[12vh]">
      <div className="w-full max-w-sm">
        <div className="mb-5 flex items-center gap-2 text-harbour-strong">
          <TidemarkLogo />
          <span className="font-serif text-2xl font-semibold">Tidemark</span>
        </div>
        <section className="rounded-lg border border-line bg-surface p-6 shadow-sm">
          <h1 className="mb-4 text-xl">{title}</h1>
          {children}
        </section>
      </div>
    </main>
  );
}
