import { useEffect, useId, useRef } from "react";
import { useTranslation } from "react-i18next";
import { lowerFirst } from "@/lib/format";

export interface PickGroup {
  code: string;
  label: string;
  items: { code: string; label: string; note?: string }[];
}

export interface PickValue {
  /** Whole groups chosen (grade families, defect categories). */
  groups: string[];
  /** Single items chosen (grades, defect types). */
  items: string[];
}

/**
 * A drop-down list of checkboxes in groups: a whole group, or single items. The API reads a group
 * and items together as "both must hold", which would quietly give nothing for an item outside the
 * group — so choosing one kind clears the other, and the hint says so.
 */
export function MultiPick({
  label,
  allLabel,
  groupNoun,
  groups,
  value,
  onChange,
  testId,
}: {
  label: string;
  allLabel: string;
  /** "family", "category": for "Every … " lines and the hint. */
  groupNoun: string;
  groups: PickGroup[];
  value: PickValue;
  onChange: (next: PickValue) => void;
  testId?: string;
}) {
  const { t } = useTranslation("reports");
  const ref = useRef<HTMLDetailsElement>(null);
  const labelId = useId();
  const summaryId = useId();
  useEffect(() => {
    const close = (e: MouseEvent) => {
      if (ref.current?.open && !ref.current.contains(e.target as Node)) ref.current.open = false;
    };
    document.addEventListener("mousedown", close);
    return () => document.removeEventListener("mousedown", close);
  }, []);

  const chosen = [...value.groups.map((g) => t("multiPick.everyGroup", { code: g })), ...value.items];
  const summary = chosen.length === 0 ? allLabel : chosen.length <= 2 ? chosen.join(", ") : `${chosen.slice(0, 2).join(", ")} +${chosen.length - 2}`;
  const toggleGroup = (code: string, on: boolean) => onChange({ groups: on ? [...value.groups, code] : value.groups.filter((g) => g !== code), items: [] });
  const toggleItem = (code: string, on: boolean) => onChange({ groups: [], items: on ? [...value.items, code] : value.items.filter((i) => i !== code) });

  return (
    <div className="flex min-w-0 flex-col gap-1" data-testid={testId}>
      <span id={labelId} className="text-sm font-semibold text-ink-800">
        {label}
      </span>
      <details ref={ref} className="group relative">
        <summary
          // The name is the label and then what is chosen, so it holds the words on screen (WCAG 2.5.3).
          aria-labelledby={`${labelId} ${summaryId}`}
          className="flex min-h-11 cursor-pointer list-none items-center justify-between gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900 [&::-webkit-details-marker]:hidden"
        >
          <span id={summaryId} className={`truncate ${chosen.length ? "font-semibold" : ""}`} data-testid={testId ? `${testId}-summary` : undefined}>
            {summary}
          </span>
          <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0 transition-transform group-open:rotate-180" aria-hidden>
            <path d="M2 4l4 4 4-4" fill="none" stroke="currentColor" strokeWidth="1.8" />
          </svg>
        </summary>
        <div className="absolute left-0 z-20 mt-1 max-h-96 w-80 max-w-[90vw] overflow-y-auto rounded-md border border-ink-300 bg-white p-2 shadow-lg">
          <p className="px-1 pb-2 text-xs text-ink-600">
            {groupNoun === "family" ? t("multiPick.hintFamilies") : groupNoun === "category" ? t("multiPick.hintCategories") : t("multiPick.hintGroups")}
          </p>
          {chosen.length ? (
            <button
              type="button"
              className="mb-1 min-h-10 w-full rounded px-2 text-left text-sm font-semibold text-strand-700 hover:bg-strand-50"
              onClick={() => onChange({ groups: [], items: [] })}
            >
              {t("multiPick.clear", { what: lowerFirst(allLabel) })}
            </button>
          ) : null}
          {groups.map((g) => {
            const groupOn = value.groups.includes(g.code);
            return (
              <fieldset key={g.code} className="border-t border-ink-100 py-1">
                <legend className="sr-only">{g.label}</legend>
                <label className="flex min-h-10 cursor-pointer items-center gap-2 rounded px-2 text-sm font-semibold hover:bg-ink-50">
                  <input type="checkbox" className="h-4 w-4" checked={groupOn} onChange={(e) => toggleGroup(g.code, e.target.checked)} />
                  {t("multiPick.everyGroupNamed", { code: g.code, name: g.label })}
                </label>
                {g.items.map((i) => (
                  <label key={i.code} className="flex min-h-10 cursor-pointer items-center gap-2 rounded pl-7 pr-2 text-sm hover:bg-ink-50">
                    <input
                      type="checkbox"
                      className="h-4 w-4"
                      checked={groupOn || value.items.includes(i.code)}
                      disabled={groupOn}
                      onChange={(e) => toggleItem(i.code, e.target.checked)}
                    />
                    <span>
                      <span className="font-semibold">{i.code}</span> {i.label}
                      {i.note ? <span className="text-ink-500"> ({i.note})</span> : null}
                    </span>
                  </label>
                ))}
              </fieldset>
            );
          })}
        </div>
      </details>
    </div>
  );
}
