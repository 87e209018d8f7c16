import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { VARIABLES } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { count } from "@/lib/format";
import { inputClass, labelClass, labelText } from "./filter-bar";

export const variableOf = (key: string | undefined) => VARIABLES.find((v) => v.key === key);

/** A casting condition, derived value or analysis, grouped as the variables list groups them. */
export function VariableSelect({ label, value, onChange, testId }: { label: string; value: string; onChange: (key: string) => void; testId?: string }) {
  const { t } = useTranslation("reports");
  const { variable, variableDescription } = useTerms();
  const groups = [...new Set(VARIABLES.map((v) => v.group))];
  return (
    <label className={labelClass}>
      <span className={labelText}>{label}</span>
      <select value={value} onChange={(e) => onChange(e.target.value)} className={inputClass} data-testid={testId}>
        {groups.map((g) => (
          <optgroup key={g} label={t(`variableGroups.${g}`)}>
            {VARIABLES.filter((v) => v.group === g).map((v) => (
              <option key={v.key} value={v.key} title={variableDescription(v.key)}>
                {variable(v.key)}
                {v.unit !== "–" ? ` (${v.unit})` : ""}
              </option>
            ))}
          </optgroup>
        ))}
      </select>
    </label>
  );
}

/** A small choice among fixed values (bins, minimum n, period). */
export function Choice({
  label,
  value,
  options,
  onChange,
  hint,
  testId,
}: {
  testId?: string;
  label: string;
  value: string;
  options: { value: string; label: string }[];
  onChange: (v: string) => void;
  hint?: ReactNode;
}) {
  const known = options.some((o) => o.value === value);
  return (
    <label className={labelClass}>
      <span className={labelText}>{label}</span>
      <select value={value} onChange={(e) => onChange(e.target.value)} className={inputClass} data-testid={testId}>
        {known ? null : <option value={value}>{value}</option>}
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      {hint ? <span className="text-xs text-ink-600">{hint}</span> : null}
    </label>
  );
}

export const numberOptions = (values: number[], suffix = "") => values.map((v) => ({ value: String(v), label: `${v}${suffix}` }));
/** The least slabs in a bin or cell: "30 slabs". */
export const minNOptions = (t: TFunction) =>
  [10, 20, 30, 50, 100].map((v) => ({ value: String(v), label: t("reports:settings.minNOption", { count: v, n: count(v) }) }));

const PERIODS = ["day", "week", "month"] as const;

/** Day, ISO week and (where the report offers it) month: one point or row per period. */
export function PeriodChoice({ label, value, months, onChange }: { label: string; value: string; months: boolean; onChange: (v: string) => void }) {
  const { t } = useTranslation("reports");
  const options = (months ? PERIODS : PERIODS.slice(0, 2)).map((p) => ({ value: p, label: t(`settings.periods.${p}`) }));
  return <Choice label={label} value={value} options={options} onChange={onChange} />;
}

export function SettingsRow({ children }: { children: ReactNode }) {
  return <div className="grid grid-cols-2 gap-3 md:grid-cols-4 xl:grid-cols-6">{children}</div>;
}

/** Crude rates only, or each period's rate directly standardised to the grade-family mix beside it. */
export function StandardiseChoice({
  value,
  onChange,
  testId = "standardise-select",
}: {
  value: string | undefined;
  onChange: (v: string | undefined) => void;
  testId?: string;
}) {
  const { t } = useTranslation("reports");
  return (
    <Choice
      label={t("settings.gradeMix")}
      testId={testId}
      value={value ?? ""}
      options={[
        { value: "", label: t("settings.ratesAsCast") },
        { value: "grade_family", label: t("settings.alsoStandardise") },
      ]}
      onChange={(v) => onChange(v || undefined)}
      hint={t("settings.standardiseHint")}
    />
  );
}
