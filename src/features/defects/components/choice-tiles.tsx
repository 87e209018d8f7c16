import type { ReactNode } from "react";

export interface Choice<T extends string | number> {
  value: T;
  label: ReactNode;
  /** The accessible name when the label is more than words. */
  name?: string;
  hint?: ReactNode;
}

/**
 * One choice out of a few, as big tiles for gloved fingers (at least 56 px high). The chosen tile
 * carries a tick and a heavy border, not only a colour.
 */
export function ChoiceTiles<T extends string | number>({
  label,
  choices,
  value,
  onChange,
  columns = "grid-cols-2 sm:grid-cols-3",
  error,
  id,
}: {
  label: string;
  choices: Choice<T>[];
  value: T | null;
  onChange: (v: T) => void;
  columns?: string;
  error?: string;
  id?: string;
}) {
  return (
    <div id={id} className="scroll-mt-24">
      <div className="mb-2 text-base font-semibold text-ink-900" id={id ? `${id}-label` : undefined}>
        {label}
      </div>
      <div role="radiogroup" aria-label={label} aria-invalid={error ? true : undefined} className={`grid gap-2 ${columns}`}>
        {choices.map((c) => {
          const on = c.value === value;
          return (
            <button
              key={String(c.value)}
              type="button"
              role="radio"
              aria-checked={on}
              aria-label={c.name}
              onClick={() => onChange(c.value)}
              className={`relative flex min-h-14 flex-col items-start justify-center rounded-lg border-2 px-3 py-2 text-left text-base font-semibold transition-colors ${
                on
                  ? "border-strand-700 bg-strand-50 text-ink-950 shadow-[inset_0_0_0_1px_var(--color-strand-700)]"
                  : "border-ink-300 bg-white text-ink-800 hover:border-ink-500"
              }`}
            >
              <span className="flex w-full items-center gap-2 pr-6">{c.label}</span>
              {c.hint ? <span className="text-xs font-normal text-ink-600">{c.hint}</span> : null}
              {on ? (
                <span
                  aria-hidden
                  className="absolute right-2 top-2 flex h-5 w-5 items-center justify-center rounded-full bg-strand-700 text-xs font-bold text-white"
                >
                  ✓
                </span>
              ) : null}
            </button>
          );
        })}
      </div>
      {error ? (
        <p role="alert" className="mt-1 text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}
