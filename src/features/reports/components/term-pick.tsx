import { useEffect, useId, useRef } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { CATEGORICAL_KEYS, VARIABLES, type VariableGroup } from "@shared/variables";
import { terms, useTerms, type Terms } from "@/i18n/terms";
import { inSentence } from "./report-params";

const GROUPS: ("place" | VariableGroup)[] = ["place", "condition", "derived", "geometry", "chemistry"];

interface TermOption {
  key: string;
  label: string;
  note?: string;
}

function optionsOf(group: "place" | VariableGroup, t: TFunction, variable: Terms["variable"]): TermOption[] {
  if (group === "place")
    return CATEGORICAL_KEYS.map((k) => ({ key: k, label: variable(k), note: k === "grade_family" ? t("termPick.offeredFirst") : undefined }));
  return VARIABLES.filter((v) => v.group === group).map((v) => ({ key: v.key, label: `${variable(v.key)}${v.unit !== "–" ? ` (${v.unit})` : ""}` }));
}

/** The terms of a model in a few words: "Grade family, Strand +2". */
export function termsSummary(keys: string[], empty: string, label: (key: string) => string = terms().variable): string {
  if (keys.length === 0) return empty;
  const names = keys.map(label);
  return names.length <= 2 ? names.join(", ") : `${names.slice(0, 2).join(", ")} +${names.length - 2}`;
}

/**
 * A drop-down list of checkboxes over every term a model may hold: the categorical keys (grade
 * family first) and the numeric conditions in their groups. Keys taken elsewhere (the condition
 * examined, when picking what to adjust for) are shown but cannot be ticked, with the reason.
 */
export function TermPick({
  label,
  value,
  onChange,
  emptyLabel,
  taken = {},
  max = 8,
  min = 0,
  only,
  testId,
  hint,
}: {
  label: string;
  value: string[];
  onChange: (keys: string[]) => void;
  /** What the summary says when nothing is ticked ("Nothing: crude only"). */
  emptyLabel: string;
  /** Keys that cannot be ticked here, with why ("examined"). */
  taken?: Record<string, string>;
  max?: number;
  /** The least number of keys: the last one cannot be unticked. */
  min?: number;
  /** Offer only these groups (e.g. the categorical ones). */
  only?: ("place" | VariableGroup)[];
  testId?: string;
  hint?: string;
}) {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
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
  const full = value.length >= max;
  const toggle = (key: string, on: boolean) => onChange(on ? [...value, key] : value.filter((k) => k !== key));
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
          <span id={summaryId} className={`truncate ${value.length ? "font-semibold" : ""}`} data-testid={testId ? `${testId}-summary` : undefined}>
            {termsSummary(value, emptyLabel, variable)}
          </span>
          <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0 transition-transform group-open:rotate-180" aria-hidden>
            <path d="M2 4l4 4 4-4" fill="none" stroke="currentColor" strokeWidth="1.8" />
          </svg>
        </summary>
        <div className="absolute left-0 z-20 mt-1 max-h-[26rem] w-80 max-w-[90vw] overflow-y-auto rounded-md border border-ink-300 bg-white p-2 shadow-lg">
          <p className="px-1 pb-2 text-xs text-ink-600">
            {hint ?? t("termPick.tickUpTo", { count: max, n: max })} {full ? t("termPick.full", { count: max, n: max }) : ""}
          </p>
          {value.length > min ? (
            <button
              type="button"
              className="mb-1 min-h-12 w-full rounded px-2 text-left text-sm font-semibold text-strand-700 hover:bg-strand-50"
              onClick={() => onChange(min > 0 ? value.slice(0, min) : [])}
            >
              {min > 0
                ? t("termPick.keepOnly", { term: inSentence(variable(value[0]!), (s) => s.toLowerCase()) })
                : t("termPick.clear", { what: inSentence(emptyLabel, (s) => s.toLowerCase()) })}
            </button>
          ) : null}
          {GROUPS.filter((g) => !only || only.includes(g)).map((g) => (
            <fieldset key={g} className="border-t border-ink-100 py-1">
              <legend className="px-1 pt-1 text-xs font-semibold uppercase tracking-wide text-ink-600">{t(`variableGroups.${g}`)}</legend>
              {optionsOf(g, t, variable).map((o) => {
                const on = value.includes(o.key);
                const why = taken[o.key];
                const locked = Boolean(why) || (!on && full) || (on && value.length <= min);
                return (
                  <label
                    key={o.key}
                    className={`flex min-h-12 items-center gap-2 rounded px-2 text-sm ${locked ? "text-ink-500" : "cursor-pointer hover:bg-ink-50"}`}
                  >
                    <input type="checkbox" className="h-5 w-5 shrink-0" checked={on} disabled={locked} onChange={(e) => toggle(o.key, e.target.checked)} />
                    <span>
                      {o.label}
                      {why ? <span className="text-ink-500"> ({why})</span> : o.note ? <span className="text-ink-500"> ({o.note})</span> : null}
                    </span>
                  </label>
                );
              })}
            </fieldset>
          ))}
        </div>
      </details>
    </div>
  );
}
