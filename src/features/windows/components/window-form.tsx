import { useFieldArray, useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { z } from "zod";
import {
  MAX_WINDOW_CONDITIONS,
  WINDOW_OPS,
  WINDOW_VALUE_LIMIT,
  conditionsText,
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
import { useCreateWindow, useUpdateWindow } from "../api/windows.queries";
import { DefectTargetOptions } from "@/features/defects/components/defect-target-options";

const selectClass = "min-h-11 w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 text-ink-900";
const GROUP_LABELS: Record<VariableGroup, string> = {
  condition: "Casting conditions",
  derived: "Derived values",
  geometry: "Slab size",
  chemistry: "Chemistry (heat analysis)",
};
const GROUPS: VariableGroup[] = ["condition", "derived", "geometry", "chemistry"];

/** A value as typed: a decimal comma is a decimal point. */
const toNumber = (s: string) => (s.trim() === "" ? NaN : Number(s.trim().replace(",", ".")));

const formSchema = z
  .object({
    name: createWindowSchema.shape.name,
    /** "" = every family. */
    familyCode: z.string().max(40),
    /** "" = any defect; else "type:SLG" or "category:CRACK". */
    target: z.string().max(60),
    conditions: z
      .array(
        z.object({
          variable: z.string().min(1, "Choose a condition."),
          op: z.enum(WINDOW_OPS),
          value: z.string().refine((s) => {
            const n = toNumber(s);
            return Number.isFinite(n) && Math.abs(n) <= WINDOW_VALUE_LIMIT;
          }, "Give the value as a number."),
        }),
      )
      .min(1, "Give at least one condition.")
      .max(MAX_WINDOW_CONDITIONS, `At most ${MAX_WINDOW_CONDITIONS} conditions per rule.`),
    note: z.string().trim().max(500, "The note is at most 500 characters."),
  })
  .superRefine((v, ctx) => {
    // The shared rules of a condition list (no condition twice, no window no slab could meet).
    const parsed = windowConditionsSchema.safeParse(v.conditions.map((c) => ({ ...c, value: toNumber(c.value) })));
    if (!parsed.success && v.conditions.every((c) => Number.isFinite(toNumber(c.value)) && c.variable)) {
      for (const issue of parsed.error.issues)
        ctx.addIssue({ code: "custom", path: ["conditions", ...issue.path.map((p) => (typeof p === "symbol" ? String(p) : p))], message: issue.message });
    }
  });
type FormValues = z.input<typeof formSchema>;

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
          conditions: rule.conditions.map((c) => ({ variable: c.variable, op: c.op, value: String(c.value) })),
          note: rule.note ?? "",
        }
      : { name: "", familyCode: "", target: "", conditions: [{ variable: "casting_speed_m_min", op: "above", value: "" }], note: "" },
  });
  const conditions = useFieldArray({ control: form.control, name: "conditions" });
  const e = form.formState.errors;
  const watched = form.watch("conditions");
  const preview = (() => {
    const cs = watched.map((c) => ({ variable: c.variable, op: c.op, value: toNumber(c.value) }));
    return cs.every((c) => c.variable && Number.isFinite(c.value)) ? conditionsText(cs as WindowCondition[]) : null;
  })();
  const conditionsError = e.conditions?.message ?? e.conditions?.root?.message;
  const idPrefix = rule ? `window-${rule.id}` : "window-new";
  return (
    <form
      noValidate
      aria-label={rule ? `Change the rule ${rule.name}` : "Write a rule"}
      className="space-y-4"
      onSubmit={form.handleSubmit(async (v) => {
        const body = toBody(v);
        if (rule) await update.mutateAsync({ id: rule.id, body });
        else await create.mutateAsync(body);
        onDone();
      })}
    >
      <div className="grid gap-3 md:grid-cols-2">
        <TextField label="Name of the rule" placeholder="e.g. Fast casting with a weak brake" {...form.register("name")} error={e.name?.message} />
        <label className="flex flex-col gap-1" htmlFor={`${idPrefix}-family`}>
          <span className="text-sm font-semibold text-ink-800">Grade family</span>
          <select id={`${idPrefix}-family`} {...form.register("familyCode")} className={selectClass}>
            <option value="">Every family</option>
            {families.map((f) => (
              <option key={f.code} value={f.code}>
                {f.code} — {f.name}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 md:col-span-2" htmlFor={`${idPrefix}-target`}>
          <span className="text-sm font-semibold text-ink-800">The defect it is meant to keep away</span>
          <select id={`${idPrefix}-target`} {...form.register("target")} className={selectClass}>
            <option value="">Any defect</option>
            <DefectTargetOptions categories={categories} types={types} />
          </select>
        </label>
      </div>

      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold text-ink-800">Conditions — a slab is flagged when all of them hold</legend>
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
                <span className="text-xs font-semibold text-ink-700">Condition {i + 1}</span>
                <select aria-label={`Condition ${i + 1}: variable`} {...form.register(`conditions.${i}.variable`)} className={selectClass}>
                  {GROUPS.map((g) => (
                    <optgroup key={g} label={GROUP_LABELS[g]}>
                      {VARIABLES.filter((v) => v.group === g).map((v) => (
                        <option key={v.key} value={v.key}>
                          {v.label}
                          {v.unit !== "–" ? ` (${v.unit})` : ""}
                        </option>
                      ))}
                    </optgroup>
                  ))}
                </select>
                {ce?.variable?.message ? <span className="text-sm text-alarm-700">{ce.variable.message}</span> : null}
              </label>
              <label className="flex flex-col gap-1">
                <span className="text-xs font-semibold text-ink-700">Is</span>
                <select aria-label={`Condition ${i + 1}: above or below`} {...form.register(`conditions.${i}.op`)} className={selectClass}>
                  <option value="above">above</option>
                  <option value="below">below</option>
                </select>
              </label>
              <label className="flex flex-col gap-1">
                <span className="text-xs font-semibold text-ink-700">Value{variable && variable.unit !== "–" ? ` (${variable.unit})` : ""}</span>
                <input
                  aria-label={`Condition ${i + 1}: value`}
                  inputMode="decimal"
                  aria-invalid={ce?.value ? true : undefined}
                  {...form.register(`conditions.${i}.value`)}
                  className={`min-h-11 w-full min-w-0 rounded-md border bg-white px-3 text-ink-900 ${ce?.value ? "border-alarm-700" : "border-ink-300"}`}
                />
                {ce?.value?.message ? (
                  <span role="alert" className="text-sm text-alarm-700">
                    {ce.value.message}
                  </span>
                ) : null}
              </label>
              <div className="flex items-end sm:pt-5">
                <Button variant="ghost" disabled={conditions.fields.length <= 1} onClick={() => conditions.remove(i)} aria-label={`Remove condition ${i + 1}`}>
                  Remove
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
          Add a condition
        </Button>
        <p className="text-sm text-ink-700" data-testid="window-preview">
          {preview ? <>Flags a slab when: {preview}.</> : "Fill in every value to read the rule in words."} “Above” and “below” are strict; a slab missing a
          value the rule needs is not flagged.
        </p>
      </fieldset>

      <label className="flex flex-col gap-1" htmlFor={`${idPrefix}-note`}>
        <span className="text-sm font-semibold text-ink-800">Note (optional)</span>
        <textarea
          id={`${idPrefix}-note`}
          rows={2}
          {...form.register("note")}
          className="w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 py-2 text-ink-900"
        />
        {e.note?.message ? <span className="text-sm text-alarm-700">{e.note.message}</span> : null}
      </label>

      {mutation.isError ? <Notice tone="error">{mutation.error.message}</Notice> : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={form.formState.isSubmitting}>
          {form.formState.isSubmitting ? "Saving…" : rule ? "Save the rule" : "Write the rule"}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
