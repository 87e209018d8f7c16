import type { ReactNode } from "react";

export function Card({
  title,
  actions,
  children,
  className = "",
  bodyClassName = "p-4",
}: {
  title?: ReactNode;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
  /** The body's padding; wide tables take a narrower one so they fit a tablet. */
  bodyClassName?: string;
}) {
  return (
    <section className={`rounded-lg border border-ink-200 bg-white shadow-sm ${className}`}>
      {title || actions ? (
        <header className="flex items-center justify-between gap-3 border-b border-ink-100 px-4 py-3">
          {title ? <h2 className="text-base font-semibold text-ink-900">{title}</h2> : <span />}
          {actions}
        </header>
      ) : null}
      <div className={bodyClassName}>{children}</div>
    </section>
  );
}

export function PageHeader({ title, subtitle, actions }: { title: string; subtitle?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-5 flex flex-wrap items-end justify-between gap-3">
      <div>
        <h1 className="text-2xl font-bold tracking-tight text-ink-900">{title}</h1>
        {subtitle ? <p className="mt-1 text-sm text-ink-600">{subtitle}</p> : null}
      </div>
      {actions}
    </div>
  );
}

/** A figure with its label; `n` is shown beside every rate. */
export function Stat({ label, value, note }: { label: string; value: ReactNode; note?: ReactNode }) {
  return (
    <div className="rounded-md border border-ink-100 bg-ink-50 px-3 py-2">
      <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{label}</div>
      <div className="text-2xl font-bold tabular-nums text-ink-900">{value}</div>
      {note ? <div className="text-xs text-ink-600">{note}</div> : null}
    </div>
  );
}

/** A labelled fact in a definition list (dt/dd), as the heat and slab pages show them. */
export function Fact({ label, children, testId }: { label: string; children: ReactNode; testId?: string }) {
  return (
    <div>
      <dt className="text-xs font-semibold uppercase tracking-wide text-ink-600">{label}</dt>
      <dd className="mt-0.5 text-base font-semibold tabular-nums text-ink-900" data-testid={testId}>
        {children}
      </dd>
    </div>
  );
}
