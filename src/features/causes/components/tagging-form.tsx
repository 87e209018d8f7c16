import type { ReactNode } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import { CAUSE_CONFIDENCES, type CauseConfidence } from "@shared/domain";
import { tagDefectSchema, type CauseTaxonomy, type TagDefect } from "@shared/api/causes";
import { Button } from "@/components/ui/button";
import { useTerms } from "@/i18n/terms";
import { ConfidenceIcon } from "./cause-marks";

/** The shared schema's message (English) in the language shown; another message shows as it comes. */
const TAGS_MESSAGE = "Choose at least one cause tag.";

/** The tags of the taxonomy as checkboxes in their groups; retired tags are not offered for new taggings. */
export function TagChecklist({ taxonomy, value, onChange, name }: { taxonomy: CauseTaxonomy; value: string[]; onChange: (v: string[]) => void; name: string }) {
  const { t } = useTranslation("process");
  return (
    <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3" role="group" aria-label={t("causesPage.title")}>
      {taxonomy.groups.map((g) => {
        const tags = g.tags.filter((x) => !x.retired);
        if (tags.length === 0) return null;
        return (
          <fieldset key={g.code} className="rounded-md border border-ink-200 px-2 pb-1">
            <legend className="px-1 text-xs font-semibold uppercase tracking-wide text-ink-600">{g.name}</legend>
            {tags.map((x) => (
              <label key={x.code} className="flex min-h-11 cursor-pointer items-center gap-2 rounded px-1 text-sm hover:bg-ink-50">
                <input
                  type="checkbox"
                  name={name}
                  value={x.code}
                  className="h-5 w-5"
                  checked={value.includes(x.code)}
                  onChange={(e) => onChange(e.target.checked ? [...value, x.code] : value.filter((c) => c !== x.code))}
                />
                <span>
                  {x.name} <span className="text-xs text-ink-500">{x.code}</span>
                </span>
              </label>
            ))}
          </fieldset>
        );
      })}
    </div>
  );
}

export function ConfidenceChoice({ value, onChange, name }: { value: CauseConfidence; onChange: (v: CauseConfidence) => void; name: string }) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  return (
    <fieldset>
      <legend className="mb-1 text-sm font-semibold text-ink-800">{t("causes.form.confidence")}</legend>
      <div className="grid gap-2 sm:grid-cols-3">
        {CAUSE_CONFIDENCES.map((c) => (
          <label
            key={c}
            className={`flex min-h-12 cursor-pointer items-center gap-2 rounded-md border-2 px-3 py-1 text-sm ${value === c ? "border-strand-700 bg-strand-50" : "border-ink-200 bg-white"}`}
          >
            <input type="radio" name={name} value={c} className="h-4 w-4" checked={value === c} onChange={() => onChange(c)} />
            <ConfidenceIcon confidence={c} className="h-4 w-4 text-strand-800" />
            <span>
              <span className="font-semibold">{term("causeConfidence", c)}</span>
              <span className="block text-xs text-ink-600">{t(`causes.form.hints.${c}`)}</span>
            </span>
          </label>
        ))}
      </div>
    </fieldset>
  );
}

/**
 * Causes, a confidence and a note: the same fields for one defect and for many. `extra` sits above
 * the buttons (the bulk form's defect-type narrowing).
 */
export function TaggingForm({
  taxonomy,
  submitLabel,
  busy,
  onSubmit,
  onCancel,
  extra,
  initial,
  name,
}: {
  taxonomy: CauseTaxonomy;
  submitLabel: string;
  busy?: boolean;
  onSubmit: (values: TagDefect) => void;
  onCancel?: () => void;
  extra?: ReactNode;
  initial?: Partial<TagDefect>;
  /** Distinguishes the form's inputs when several are on one page. */
  name: string;
}) {
  const { t } = useTranslation("process");
  const form = useForm<TagDefect>({
    resolver: zodResolver(tagDefectSchema),
    defaultValues: { tags: [], confidence: "suspected", note: "", ...initial },
  });
  const errors = form.formState.errors;
  return (
    <form
      noValidate
      className="space-y-4"
      aria-label={submitLabel}
      onSubmit={form.handleSubmit((v) => onSubmit({ ...v, note: v.note?.trim() ? v.note.trim() : null }))}
    >
      <div>
        <div className="mb-1 text-sm font-semibold text-ink-800">{t("causes.defect.causes")}</div>
        <Controller
          control={form.control}
          name="tags"
          render={({ field }) => <TagChecklist taxonomy={taxonomy} value={field.value} onChange={field.onChange} name={`${name}-tags`} />}
        />
        {errors.tags ? (
          <p role="alert" className="mt-1 text-sm font-medium text-alarm-700">
            {errors.tags.message === TAGS_MESSAGE ? t("causes.form.chooseTag") : errors.tags.message}
          </p>
        ) : null}
      </div>
      <Controller
        control={form.control}
        name="confidence"
        render={({ field }) => <ConfidenceChoice value={field.value} onChange={field.onChange} name={`${name}-confidence`} />}
      />
      <label className="flex flex-col gap-1">
        <span className="text-sm font-semibold text-ink-800">{t("ui.noteOptional")}</span>
        <textarea
          {...form.register("note")}
          rows={2}
          maxLength={1000}
          className="min-h-11 rounded-md border border-ink-300 bg-white px-3 py-2 text-sm"
          placeholder={t("causes.form.notePlaceholder")}
        />
        {errors.note ? <span className="text-sm text-alarm-700">{errors.note.message}</span> : null}
      </label>
      {extra}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={busy}>
          {submitLabel}
        </Button>
        {onCancel ? (
          <Button variant="ghost" onClick={onCancel}>
            {t("ui.cancel")}
          </Button>
        ) : null}
      </div>
    </form>
  );
}
