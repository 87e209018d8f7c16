import { useTranslation } from "react-i18next";

/** The Strandsight mark: a slab outline cut by the strand's centre line. */
export function Logo({ className = "h-8 w-8" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden>
      <rect width="32" height="32" rx="6" fill="#0c141b" />
      <rect x="6" y="11" width="20" height="10" rx="1.5" fill="none" stroke="#e8b04a" strokeWidth="2.2" />
      <path d="M4 16h24" stroke="#5fb3c2" strokeWidth="2" strokeDasharray="3 2" />
    </svg>
  );
}

/** A quiet spinner with its words ("Loading…" in the language shown, unless a label is given). */
export function Spinner({ label }: { label?: string }) {
  const { t } = useTranslation();
  return (
    <div role="status" className="flex items-center gap-2 text-sm text-ink-600">
      <span className="h-4 w-4 animate-spin rounded-full border-2 border-ink-300 border-t-strand-700" aria-hidden />
      {label ? `${label}…` : t("loading")}
    </div>
  );
}
