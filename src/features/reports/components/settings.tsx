import type { ReactNode } from "react";
import { VARIABLES, type VariableGroup } from "@shared/variables";
import { inputClass, labelClass, labelText } from "./filter-bar";

const GROUP_LABELS: Record<VariableGroup, string> = {
  condition: "Casting conditions",
  derived: "Derived from the conditions",
  geometry: "Slab size",
  chemistry: "Chemistry (heat analysis)",
};

export const variableOf = (key: string | undefined) => VARIABLES.find((v) => v.key === key);

/** A casting condition, derived value or analysis, grouped as the variables list groups them. */
export function VariableSelect({ label, value, onChange, testId }: { label: string; value: string; onChange: (key: string) => void; testId?: string }) {
  const groups = [...new Set(VARIABLES.map((v) => v.group))];
  return (
    <label className={labelClass}>
      <span className={labelText}>{label}</span>
      <select value={value} onChange={(e) => onChange(e.target.value)} className={inputClass} data-testid={testId}>
        {groups.map((g) => (
          <optgroup key={g} label={GROUP_LABELS[g]}>
            {VARIABLES.filter((v) => v.group === g).map((v) => (
              <option key={v.key} value={v.key} title={v.description}>
                {v.label}
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
export const MIN_N_OPTIONS = numberOptions([10, 20, 30, 50, 100], " slabs");

const PERIODS = [
  { value: "day", label: "Day" },
  { value: "week", label: "ISO week" },
  { value: "month", label: "Month" },
];

/** Day, ISO week and (where the report offers it) month: one point or row per period. */
export function PeriodChoice({ label, value, months, onChange }: { label: string; value: string; months: boolean; onChange: (v: string) => void }) {
  return <Choice label={label} value={value} options={months ? PERIODS : PERIODS.slice(0, 2)} onChange={onChange} />;
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
  return (
    <Choice
      label="Grade mix"
      testId={testId}
      value={value ?? ""}
      options={[
        { value: "", label: "Rates as cast" },
        { value: "grade_family", label: "Also standardise to the grade mix" },
      ]}
      onChange={(v) => onChange(v || undefined)}
      hint="compares periods as if each had cast the same grade-family mix"
    />
  );
}
