import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";

const tones = {
  info: { box: "border-strand-600 bg-strand-50 text-ink-900", mark: "i" },
  caution: { box: "border-ember-600 bg-ember-50 text-ink-900", mark: "!" },
  error: { box: "border-alarm-700 bg-alarm-100 text-ink-900", mark: "×" },
  ok: { box: "border-ok-700 bg-ok-100 text-ink-900", mark: "✓" },
} as const;

/** A message block; the tone is carried by a text label and a mark, not by colour alone. */
export function Notice({ tone = "info", title, children }: { tone?: keyof typeof tones; title?: string; children: ReactNode }) {
  const look = tones[tone];
  const { t } = useTranslation();
  return (
    <div role={tone === "error" ? "alert" : "status"} className={`flex gap-3 rounded-md border-l-4 px-4 py-3 text-sm ${look.box}`}>
      <span aria-hidden className="mt-0.5 flex h-5 w-5 shrink-0 items-center justify-center rounded-full border border-current text-xs font-bold">
        {look.mark}
      </span>
      <div>
        <span className="font-semibold">{title ?? t(`notice.${tone}`)}: </span>
        {children}
      </div>
    </div>
  );
}
