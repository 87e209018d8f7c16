import { useEffect, useRef, useState } from "react";
import { useTranslation } from "react-i18next";
import type { PlantSetup } from "@shared/api/plant";
import { Button } from "@/components/ui/button";
import type { HeatListParams } from "../api/heats.queries";
import { DateField } from "@/components/ui/date-field";

type Families = PlantSetup["gradeFamilies"];

const inputClass = "min-h-12 rounded-md border border-ink-300 bg-white px-3 text-ink-900 placeholder:text-ink-400";

/** Search, grade or family, and a cast-date range. Each change goes to the address (and back to page 1). */
export function HeatFilters({ value, families, onChange }: { value: HeatListParams; families: Families; onChange: (next: Partial<HeatListParams>) => void }) {
  const { t } = useTranslation("heats");
  const [text, setText] = useState(value.q ?? "");
  const sent = useRef(value.q ?? "");
  // The address can change from outside (back button, a link): follow it, but never overwrite what is
  // being typed with the echo of what was sent a moment ago.
  useEffect(() => {
    if ((value.q ?? "") !== sent.current) {
      sent.current = value.q ?? "";
      setText(value.q ?? "");
    }
  }, [value.q]);
  useEffect(() => {
    const typed = text.trim();
    if (typed === sent.current) return;
    const timer = setTimeout(() => {
      sent.current = typed;
      onChange({ q: typed || undefined });
    }, 300);
    return () => clearTimeout(timer);
  }, [text, onChange]);

  const gradeValue = value.grade ? `grade:${value.grade}` : value.family ? `family:${value.family}` : "";
  const anyFilter = Boolean(value.q || value.grade || value.family || value.from || value.to);

  return (
    <form
      role="search"
      aria-label={t("filters.formLabel")}
      className="grid gap-3 md:grid-cols-6 xl:grid-cols-[minmax(14rem,1.4fr)_minmax(12rem,1fr)_auto_auto_auto]"
      onSubmit={(e) => {
        e.preventDefault();
        sent.current = text.trim();
        onChange({ q: text.trim() || undefined });
      }}
    >
      <label className="flex flex-col gap-1 md:col-span-3 xl:col-span-1">
        <span className="text-sm font-semibold text-ink-800">{t("filters.search")}</span>
        <input
          type="search"
          value={text}
          onChange={(e) => setText(e.target.value)}
          placeholder={t("filters.searchPlaceholder")}
          autoComplete="off"
          spellCheck={false}
          className={inputClass}
        />
      </label>
      <label className="flex flex-col gap-1 md:col-span-3 xl:col-span-1">
        <span className="text-sm font-semibold text-ink-800">{t("filters.grade")}</span>
        <select
          value={gradeValue}
          onChange={(e) => {
            const [kind, code] = e.target.value.split(":");
            onChange({ grade: kind === "grade" ? code : undefined, family: kind === "family" ? code : undefined });
          }}
          className={inputClass}
        >
          <option value="">{t("filters.allGrades")}</option>
          {families.map((f) => (
            <optgroup key={f.code} label={`${f.name} (${f.code})`}>
              <option value={`family:${f.code}`}>{t("filters.everyFamilyGrade", { code: f.code })}</option>
              {f.grades.map((g) => (
                <option key={g.code} value={`grade:${g.code}`}>
                  {g.active ? `${g.code} — ${g.name}` : t("filters.retiredGrade", { code: g.code, name: g.name })}
                </option>
              ))}
            </optgroup>
          ))}
        </select>
      </label>
      <DateField
        unreadable="keep"
        label={t("filters.castFrom")}
        className="flex flex-col gap-1 md:col-span-2 xl:col-span-1"
        labelClassName="text-sm font-semibold text-ink-800"
        value={value.from ?? ""}
        max={value.to}
        onChange={(v) => onChange({ from: v || undefined })}
        inputClassName={inputClass}
      />
      <DateField
        unreadable="keep"
        label={t("filters.castTo")}
        className="flex flex-col gap-1 md:col-span-2 xl:col-span-1"
        labelClassName="text-sm font-semibold text-ink-800"
        value={value.to ?? ""}
        min={value.from}
        onChange={(v) => onChange({ to: v || undefined })}
        inputClassName={inputClass}
      />
      <div className="flex items-end md:col-span-2 xl:col-span-1">
        <Button
          variant="ghost"
          className="min-h-12 w-full"
          disabled={!anyFilter}
          onClick={() => {
            setText("");
            sent.current = "";
            onChange({ q: undefined, grade: undefined, family: undefined, from: undefined, to: undefined });
          }}
        >
          {t("filters.clear")}
        </Button>
      </div>
    </form>
  );
}
