import { Trans, useTranslation } from "react-i18next";
import { SEVERITIES, STAGES } from "@shared/domain";
import { Button } from "@/components/ui/button";
import { AfterFirstView } from "@/components/ui/first-view";
import { useTerms } from "@/i18n/terms";
import { MultiPick } from "./multi-pick";
import { anyFilter, FILTER_KEYS, joinList, listOf, type ReportParams } from "./report-params";
import { DateField } from "@/components/ui/date-field";

/** What the filters offer, from the plant setup and the defect catalogue (the route gathers them). */
export interface FilterChoices {
  casters: { code: string; strands: number[] }[];
  families: { code: string; name: string; grades: { code: string; name: string; active: boolean }[] }[];
  categories: { code: string; name: string; types: { code: string; name: string; active: boolean }[] }[];
  /** The cause taxonomy by group (retired tags too: old taggings carry them). */
  causeGroups: { code: string; name: string; tags: { code: string; name: string; retired: boolean }[] }[];
}

export const inputClass = "min-h-11 w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";
export const labelClass = "flex min-w-0 flex-col gap-1";
export const labelText = "text-sm font-semibold text-ink-800";

type Patch = Partial<Record<string, string | undefined>>;

/**
 * Where a date field goes until the first view is drawn: the page's first date field costs the
 * browser a few tens of milliseconds to build (its calendar's words and formats), which held the
 * report's first table back. The same label and box, empty.
 */
function DateFieldPlace({ label }: { label: string }) {
  return (
    <div className={labelClass}>
      <span className={labelText}>{label}</span>
      <span className={`block ${inputClass}`} />
    </div>
  );
}

/**
 * The filters every report shares. Each change goes straight to the address, so the screen, a
 * shared link, a saved report and the Excel export all carry the same filters.
 */
export function FilterBar({ params, choices, onChange }: { params: ReportParams; choices: FilterChoices; onChange: (patch: Patch) => void }) {
  const { t } = useTranslation("reports");
  const { term } = useTerms();
  const retired = t("filters.retired");
  const where = params.caster ? (params.strand ? `${params.caster}:${params.strand}` : params.caster) : params.strand ? `*:${params.strand}` : "";
  return (
    <form role="search" aria-label={t("filters.label")} className="grid grid-cols-2 gap-3 md:grid-cols-4 xl:grid-cols-6" onSubmit={(e) => e.preventDefault()}>
      <AfterFirstView placeholder={<DateFieldPlace label={t("filters.from")} />}>
        <DateField
          unreadable="keep"
          label={t("filters.from")}
          className={labelClass}
          labelClassName={labelText}
          inputClassName={inputClass}
          value={params.from ?? ""}
          max={params.to}
          onChange={(v) => onChange({ from: v || undefined })}
        />
      </AfterFirstView>
      <AfterFirstView placeholder={<DateFieldPlace label={t("filters.to")} />}>
        <DateField
          unreadable="keep"
          label={t("filters.to")}
          className={labelClass}
          labelClassName={labelText}
          inputClassName={inputClass}
          value={params.to ?? ""}
          min={params.from}
          onChange={(v) => onChange({ to: v || undefined })}
        />
      </AfterFirstView>
      <label className={labelClass}>
        <span className={labelText}>{t("filters.where")}</span>
        <select
          value={where}
          className={inputClass}
          onChange={(e) => {
            const [caster, strand] = e.target.value.split(":");
            onChange({ caster: caster && caster !== "*" ? caster : undefined, strand: strand || undefined });
          }}
        >
          <option value="">{t("filters.everyStrand")}</option>
          {where.startsWith("*:") ? <option value={where}>{t("filters.strandOfEveryCaster", { strand: params.strand })}</option> : null}
          {choices.casters.map((c) => (
            <optgroup key={c.code} label={c.code}>
              <option value={c.code}>{t("filters.casterEveryStrand", { caster: c.code })}</option>
              {c.strands.map((s) => (
                <option key={s} value={`${c.code}:${s}`}>
                  {t("filters.casterStrand", { caster: c.code, strand: s })}
                </option>
              ))}
            </optgroup>
          ))}
        </select>
      </label>
      <div className="col-span-1">
        <MultiPick
          label={t("filters.grade")}
          allLabel={t("filters.allGrades")}
          groupNoun="family"
          testId="filter-grade"
          groups={choices.families.map((f) => ({
            code: f.code,
            label: f.name,
            items: f.grades.map((g) => ({ code: g.code, label: g.name, note: g.active ? undefined : retired })),
          }))}
          value={{ groups: listOf(params.family), items: listOf(params.grade) }}
          onChange={(v) => onChange({ family: joinList(v.groups), grade: joinList(v.items) })}
        />
      </div>
      <div className="col-span-1">
        <MultiPick
          label={t("filters.defectType")}
          allLabel={t("filters.everyDefectType")}
          groupNoun="category"
          testId="filter-defect-type"
          groups={choices.categories.map((c) => ({
            code: c.code,
            label: c.name,
            items: c.types.map((dt) => ({ code: dt.code, label: dt.name, note: dt.active ? undefined : retired })),
          }))}
          value={{ groups: listOf(params.category), items: listOf(params.defectType) }}
          onChange={(v) => onChange({ category: joinList(v.groups), defectType: joinList(v.items) })}
        />
      </div>
      <label className={labelClass}>
        <span className={labelText}>{t("filters.stage")}</span>
        <select value={params.stage ?? ""} onChange={(e) => onChange({ stage: e.target.value || undefined })} className={inputClass}>
          <option value="">{t("filters.anyStage")}</option>
          {STAGES.map((s) => (
            <option key={s} value={s}>
              {term("stages", s)}
            </option>
          ))}
        </select>
      </label>
      <label className={labelClass}>
        <span className={labelText}>{t("filters.severity")}</span>
        <select value={params.minSeverity ?? ""} onChange={(e) => onChange({ minSeverity: e.target.value || undefined })} className={inputClass}>
          <option value="">{t("filters.anySeverity")}</option>
          {SEVERITIES.map((s) => (
            <option key={s} value={String(s)}>
              {s} — {term("severities", s)}
            </option>
          ))}
        </select>
      </label>
      <label className={labelClass}>
        <span className={labelText}>{t("filters.transition")}</span>
        <select value={params.transition ?? ""} onChange={(e) => onChange({ transition: e.target.value || undefined })} className={inputClass}>
          <option value="">{t("filters.transitionIncluded")}</option>
          <option value="yes">{t("filters.transitionOnly")}</option>
          <option value="no">{t("filters.transitionLeftOut")}</option>
        </select>
      </label>
      {/* Six to a row on a desktop and the risk band as wide as the cause: their longer choices ("Any, or not scored", German words) are not cut. */}
      <label className={`${labelClass} col-span-2`}>
        <span className={labelText}>{t("filters.riskBand")}</span>
        <select
          value={params.riskBand ?? ""}
          onChange={(e) => onChange({ riskBand: e.target.value || undefined })}
          className={inputClass}
          data-testid="filter-risk-band"
        >
          <option value="">{t("filters.anyRisk")}</option>
          <option value="high">{term("riskBands", "high")}</option>
          <option value="high,raised">{t("filters.highOrRaised")}</option>
          <option value="raised">{term("riskBands", "raised")}</option>
          <option value="usual">{term("riskBands", "usual")}</option>
          {params.riskBand && !["high", "high,raised", "raised", "usual"].includes(params.riskBand) ? (
            <option value={params.riskBand}>{params.riskBand}</option>
          ) : null}
        </select>
      </label>
      <label className={`${labelClass} col-span-2`}>
        <span className={labelText}>{t("filters.cause")}</span>
        <select value={params.cause ?? ""} onChange={(e) => onChange({ cause: e.target.value || undefined })} className={inputClass} data-testid="filter-cause">
          <option value="">{t("filters.anyCause")}</option>
          {params.cause && !choices.causeGroups.some((g) => g.tags.some((tag) => tag.code === params.cause)) ? (
            <option value={params.cause}>{params.cause}</option>
          ) : null}
          {choices.causeGroups.map((g) => (
            <optgroup key={g.code} label={g.name}>
              {g.tags.map((tag) => (
                <option key={tag.code} value={tag.code}>
                  {tag.retired ? t("filters.retiredTag", { name: tag.name }) : tag.name}
                </option>
              ))}
            </optgroup>
          ))}
        </select>
      </label>
      <div className="col-span-2 flex flex-wrap items-center gap-3 md:col-span-4 xl:col-span-6">
        <p className="text-xs text-ink-600">
          <Trans t={t} i18nKey="filters.explain" components={{ 1: <em /> }} />
        </p>
        <Button
          variant="ghost"
          className="ml-auto"
          disabled={!anyFilter(params)}
          onClick={() => onChange(Object.fromEntries(FILTER_KEYS.map((k) => [k, undefined])))}
        >
          {t("filters.clear")}
        </Button>
      </div>
    </form>
  );
}
