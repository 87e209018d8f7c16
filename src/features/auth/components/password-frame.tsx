import type { ReactNode } from "react";
import { Link } from "react-router";
import { Logo } from "@/components/ui/logo";

/** The frame of the signed-out password pages: the product's mark, one narrow column, a way back to sign-in. */
export function PasswordFrame({ title, children }: { title: string; children: ReactNode }) {
  return (
    <main className="flex min-h-dvh flex-col items-center bg-ink-50 px-6 py-10">
      <div className="mb-8 flex items-center gap-3">
        <Logo className="h-10 w-10" />
        <span className="text-2xl font-bold tracking-tight text-ink-900">Strandsight</span>
      </div>
      <section className="w-full max-w-md space-y-5 rounded-lg border border-ink-200 bg-white p-6 shadow-sm">
        <h1 className="text-2xl font-bold text-ink-900">{title}</h1>
        {children}
      </section>
      <Link to="/sign-in" className="mt-6 inline-flex min-h-11 items-center font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
        Back to sign-in
      </Link>
    </main>
  );
}
