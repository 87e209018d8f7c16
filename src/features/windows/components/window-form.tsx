import { useMemo } from "react";
import { useFieldArray, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { z } from "zod";
import {
  MAX_WINDOW_CONDITIONS,
  WINDOW_OPS,
  WINDOW_VALUE_LIMIT,
  createWindowSchema,
  windowConditionsSchema,
  type CreateWindowBody,
  type OperatingWindow,
  type WindowCondition,
} from "@shared/api/operating-windows";
import { VARIABLES, type VariableGroup } from "@shared/variables";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { formatLocale, inputNumber, parseDecimal } from "@/lib/format";
import { useTerms, type Terms } from "@/i18n/terms";
import { useCreateWindow, useUpdateWindow } from "../api/windows.queries";
import { DefectTargetOptions } from "@/features/defects/components/defect-target-options";
import { settled } from "@/components/mutation-form";

const selectClass = "min-h-11 w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 text-ink-900";
/** The groups of the variable list; their words are under windows.form.groups. */
const GROUPS: VariableGroup[] = ["condition", "derived", "geometry", "chemistry"];

/** A value as typed, in the language's style (parseDecimal). */
const toNumber = (s: string) => parseDecimal(s);

/** The shared schemas' messages (English) in the language shown, by their key under windows.form.errors. */
const SCHEMA_MESSAGES: Record<string, string> = {
  "Give the rule a name of at least 2 characters.": "nameShort",
  "The name is at most 80 characters.": "nameLong",
  "Give the value as a number.": "number",
  "Give at least one condition.": "atLeastOne",
  [`At most ${MAX_WINDOW_CONDITIONS} conditions per rule.`]: "atMost",
  "The same condition is given twice (same variable, same comparison).": "twice",
  "A variable is asked to be above a value and below a smaller one: no slab could ever meet the rule.": "impossible",
  [`The value must lie between −${WINDOW_VALUE_LIMIT} and ${WINDOW_VALUE_LIMIT}.`]: "range",
};
const schemaMessage = (t: TFunction, m: string | undefined) =>
  m && SCHEMA_MESSAGES[m] ? t(`windows.form.errors.${SCHEMA_MESSAGES[m]}`, { max: MAX_WINDOW_CONDITIONS, limit: WINDOW_VALUE_LIMIT }) : m;

const formSchemaIn = (t: TFunction) =>
  z
    .object({
      name: createWindowSchema.shape.name,
      /** "" = every family. */
      familyCode: z.string().max(40),
      /** "" = any defect; else "type:SLG" or "category:CRACK". */
      target: z.string().max(60),
      conditions: z
        .array(
          z.object({
            variable: z.string().min(1, t("windows.form.errors.chooseCondition")),
            op: z.enum(WINDOW_OPS),
            value: z.string().refine((s) => {
              const n = toNumber(s);
              return Number.isFinite(n) && Math.abs(n) <= WINDOW_VALUE_LIMIT;
            }, t("windows.form.errors.number")),
          }),
        )
        .min(1, t("windows.form.errors.atLeastOne"))
        .max(MAX_WINDOW_CONDITIONS, t("windows.form.errors.atMost", { max: MAX_WINDOW_CONDITIONS })),
      note: z.string().trim().max(500, t("windows.form.errors.noteLong")),
    })
    .superRefine((v, ctx) => {
      // The shared rules of a condition list (no condition twice, no window no slab could meet).
      const parsed = windowConditionsSchema.safeParse(v.conditions.map((c) => ({ ...c, value: toNumber(c.value) })));
      if (!parsed.success && v.conditions.every((c) => Number.isFinite(toNumber(c.value)) && c.variable)) {
        for (const issue of parsed.error.issues)
          ctx.addIssue({
            code: "custom",
            path: ["conditions", ...issue.path.map((p) => (typeof p === "symbol" ? String(p) : p))],
            message: schemaMessage(t, issue.message) ?? issue.message,
          });
      }
    });
type FormValues = z.input<ReturnType<typeof formSchemaIn>>;

/** A number as the rule shows it, in the language's digits, without thousands separators ("1600 mm"). */
const ruleNumber = (value: number, digits: number) => {
  // The catalogue's digits, unless the rule was written finer than that.
  const exact = Number(value.toFixed(digits)) === value;
  return new Intl.NumberFormat(formatLocale(), {
    useGrouping: false,
    minimumFractionDigits: exact ? digits : 0,
    maximumFractionDigits: exact ? digits : 20,
  }).format(value);
};

/** "Casting speed above 1.60 m/min and EMBr current below 150 A": the rule in words, in the language shown. */
function conditionsInWords(t: TFunction, terms: Terms, language: string, cs: WindowCondition[]): string {
  return cs
    .map((c, i) => {
      const v = VARIABLES.find((x) => x.key === c.variable);
      const label = v ? terms.variable(v.key) : c.variable;
      // Inside the sentence "Casting speed" becomes "casting speed"; "EMBr current" and "SEN depth" keep their capitals; German nouns keep theirs.
      const shownLabel = i > 0 && language !== "de" && /^[A-Z][a-z]/.test(label) ? label[0]!.toLowerCase() + label.slice(1) : label;
      const unit = v && v.unit !== "–" ? ` ${v.unit}` : "";
      return t("windows.form.condition", {
        variable: shownLabel,
        op: t(`windows.form.op.${c.op}`),
        value: v ? ruleNumber(c.value, v.digits) : String(c.value),
        unit,
      });
    })
    .join(t("windows.form.and"));
}

export interface WindowFormProps {
  families: { code: string; name: string }[];
  types: { code: string; name: string }[];
  categories: { code: string; name: string }[];
  /** The rule being changed; none for a new one. */
  rule?: OperatingWindow;
  onDone: () => void;
}

function toBody(v: FormValues): CreateWindowBody {
  const [kind, code] = v.target ? (v.target.split(":") as ["type" | "category", string]) : [null, null];
  return {
    name: v.name.trim(),
    familyCode: v.familyCode || null,
    target: kind && code ? { kind, code } : null,
    conditions: v.conditions.map((c) => ({ variable: c.variable, op: c.op, value: toNumber(c.value) })),
    note: v.note.trim() || null,
  };
}

/** Writes a new rule or changes one: name, grade family, defect, 1–4 conditions that must all hold. */
export function WindowForm({ families, types, categories, rule, onDone }: WindowFormProps) {
  const { t, i18n } = useTranslation("process");
  const terms = useTerms();
  const formSchema = useMemo(() => formSchemaIn(t), [t]);
  const create = useCreateWindow();
  const update = useUpdateWindow();
  const mutation = rule ? update : create;
  const form = useForm<FormValues>({
    resolver: zodResolver(formSchema, friendlyErrors),
    defaultValues: rule
      ? {
          name: rule.name,
          familyCode: rule.familyCode ?? "",
          target: rule.target ? `${rule.target.kind}:${rule.target.code}` : "",
          conditions: rule.conditions.map((c) => ({ variable: c.variable, op: c.op, value: inputNumber(c.value) })),
          note: rule.note ?? "",
        }
      : { name: "", familyCode: "", target: "", conditions: [{ variable: "casting_speed_m_min", op: "above", value: "" }], note: "" },
  });
  const conditions = useFieldArray({ control: form.control, name: "conditions" });
  const e = form.formState.errors;
  const watched = form.watch("conditions");
  const preview = (() => {
    const cs = watched.map((c) => ({ variable: c.variable, op: c.op, value: toNumber(c.value) }));
    return cs.every((c) => c.variable && Number.isFinite(c.value)) ? conditionsInWords(t, terms, i18n.language, cs as WindowCondition[]) : null;
  })();
  const conditionsError = schemaMessage(t, e.conditions?.message ?? e.conditions?.root?.message);
  const idPrefix = rule ? `window-${rule.id}` : "window-new";
  return (
    <form
      noValidate
      aria-label={rule ? t("windows.form.changeLabel", { name: rule.name }) : t("windows.form.write")}
      className="space-y-4"
      onSubmit={form.handleSubmit(async (v) => {
        const body = toBody(v);
        if (await settled(rule ? update.mutateAsync({ id: rule.id, body }) : create.mutateAsync(body))) onDone();
      })}
    >
      <div className="grid gap-3 md:grid-cols-2">
        <TextField
          label={t("windows.form.name")}
          placeholder={t("windows.form.namePlaceholder")}
          {...form.register("name")}
          error={schemaMessage(t, e.name?.message)}
        />
        <label className="flex flex-col gap-1" htmlFor={`${idPrefix}-family`}>
          <span className="text-sm font-semibold text-ink-800">{t("windows.gradeFamily")}</span>
          <select id={`${idPrefix}-family`} {...form.register("familyCode")} className={selectClass}>
            <option value="">{t("windows.everyFamily")}</option>
            {families.map((f) => (
              <option key={f.code} value={f.code}>
                {f.code} — {f.name}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 md:col-span-2" htmlFor={`${idPrefix}-target`}>
          <span className="text-sm font-semibold text-ink-800">{t("windows.form.target")}</span>
          <select id={`${idPrefix}-target`} {...form.register("target")} className={selectClass}>
            <option value="">{t("windows.anyDefect")}</option>
            <DefectTargetOptions categories={categories} types={types} />
          </select>
        </label>
      </div>

      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold text-ink-800">{t("windows.form.conditions")}</legend>
        {conditions.fields.map((field, i) => {
          const variable = VARIABLES.find((v) => v.key === watched[i]?.variable);
          const ce = e.conditions?.[i];
          return (
            <div
              key={field.id}
              className="grid items-start gap-2 rounded-md border border-ink-200 bg-ink-50 p-2 sm:grid-cols-[minmax(0,2fr)_minmax(0,1fr)_minmax(0,1.2fr)_auto]"
              data-testid="window-condition"
            >
              <label className="flex flex-col gap-1">
                <span className="text-xs font-semibold text-ink-700">{t("windows.form.conditionN", { n: i + 1 })}</span>
                <select aria-label={t("windows.form.conditionVariable", { n: i + 1 })} {...form.register(`conditions.${i}.variable`)} className={selectClass}>
                  {GROUPS.map((g) => (
                    <optgroup key={g} label={t(`windows.form.groups.${g}`)}>
                      {VARIABLES.filter((v) => v.group === g).map((v) => (
                        <option key={v.key} value={v.key}>
                          {terms.variable(v.key)}
                          {v.unit !== "–" ? ` (${v.unit})` : ""}
                        </option>
                      ))}
                    </optgroup>
                  ))}
                </select>
                {ce?.variable?.message ? <span className="text-sm text-alarm-700">{schemaMessage(t, ce.variable.message)}</span> : null}
              </label>
              <label className="flex flex-col gap-1">
                <span className="text-xs font-semibold text-ink-700">{t("windows.form.is")}</span>
                <select aria-label={t("windows.form.conditionOp", { n: i + 1 })} {...form.register(`conditions.${i}.op`)} className={selectClass}>
                  <option value="above">{t("windows.form.op.above")}</option>
                  <option value="below">{t("windows.form.op.below")}</option>
                </select>
              </label>
              <label className="flex flex-col gap-1">
                <span className="text-xs font-semibold text-ink-700">
                  {variable && variable.unit !== "–" ? t("windows.form.valueUnit", { unit: variable.unit }) : t("windows.form.value")}
                </span>
                <input
                  aria-label={t("windows.form.conditionValue", { n: i + 1 })}
                  inputMode="decimal"
                  aria-invalid={ce?.value ? true : undefined}
                  {...form.register(`conditions.${i}.value`)}
                  className={`min-h-11 w-full min-w-0 rounded-md border bg-white px-3 text-ink-900 ${ce?.value ? "border-alarm-700" : "border-ink-300"}`}
                />
                {ce?.value?.message ? (
                  <span role="alert" className="text-sm text-alarm-700">
                    {schemaMessage(t, ce.value.message)}
                  </span>
                ) : null}
              </label>
              <div className="flex items-end sm:pt-5">
                <Button
                  variant="ghost"
                  disabled={conditions.fields.length <= 1}
                  onClick={() => conditions.remove(i)}
                  aria-label={t("windows.form.removeCondition", { n: i + 1 })}
                >
                  {t("windows.form.remove")}
                </Button>
              </div>
            </div>
          );
        })}
        {conditionsError ? (
          <p role="alert" className="text-sm font-medium text-alarm-700">
            {conditionsError}
          </p>
        ) : null}
        <Button
          variant="secondary"
          disabled={conditions.fields.length >= MAX_WINDOW_CONDITIONS}
          onClick={() => conditions.append({ variable: "embr_current_a", op: "below", value: "" })}
        >
          {t("windows.form.addCondition")}
        </Button>
        <p className="text-sm text-ink-700" data-testid="window-preview">
          {preview ? t("windows.form.preview", { rule: preview }) : t("windows.form.fillIn")} {t("windows.form.strict")}
        </p>
      </fieldset>

      <label className="flex flex-col gap-1" htmlFor={`${idPrefix}-note`}>
        <span className="text-sm font-semibold text-ink-800">{t("ui.noteOptional")}</span>
        <textarea
          id={`${idPrefix}-note`}
          rows={2}
          {...form.register("note")}
          className="w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 py-2 text-ink-900"
        />
        {e.note?.message ? <span className="text-sm text-alarm-700">{schemaMessage(t, e.note.message)}</span> : null}
      </label>

      {mutation.isError ? <Notice tone="error">{mutation.error.message}</Notice> : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={form.formState.isSubmitting}>
          {form.formState.isSubmitting ? t("ui.saving") : rule ? t("windows.form.save") : t("windows.form.writeThe")}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          {t("ui.cancel")}
        </Button>
      </div>
    </form>
  );
}
