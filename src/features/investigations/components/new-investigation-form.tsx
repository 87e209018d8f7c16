import { useMemo, useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { z } from "zod";
import type { Investigation, Person } from "@shared/api/investigations";
import { RecordForm, TextAreaField } from "@/components/mutation-form";
import { TextField } from "@/components/ui/field";
import { count } from "@/lib/format";
import { useCreateInvestigation } from "../api/investigations.queries";

/** Heat numbers as a person types them: commas, spaces or new lines between. */
export const heatList = (text: string) => [
  ...new Set(
    text
      .split(/[\s,;]+/)
      .map((s) => s.trim())
      .filter(Boolean),
  ),
];

/** The people of a person drop-down (owner, participant, action owner), by name. */
export function PersonOptions({ people }: { people: Person[] }) {
  return people.map((p) => (
    <option key={p.id} value={p.id}>
      {p.name}
    </option>
  ));
}

const formSchemaIn = (t: TFunction) =>
  z
    .object({
      title: z.string().trim().min(3, t("investigations.new.errors.title")).max(160),
      problemStatement: z.string().trim().min(10, t("investigations.new.errors.problem")).max(5000),
      ownerId: z.string(),
      heats: z.string().max(5000),
      defectIds: z.array(z.number().int().positive()),
      participantIds: z.array(z.string()),
    })
    .refine((v) => v.defectIds.length + heatList(v.heats).length > 0, { message: t("investigations.new.errors.heats"), path: ["heats"] });
type FormValues = z.infer<ReturnType<typeof formSchemaIn>>;

const inputClass = "min-h-11 w-full rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";

export function NewInvestigationForm({
  people,
  meId,
  heatNos,
  defects,
  heatDefectIds = [],
  onCreated,
  onCancel,
}: {
  people: Person[];
  meId: string;
  /** Heats the screen it came from already names. */
  heatNos: string[];
  /** Defects it came from, with a label each ("slab S1, SLG"). */
  defects: { id: number; label: string }[];
  /** Opened from heats: their defects (live, not rejected), offered to include with one tick. */
  heatDefectIds?: number[];
  onCreated: (inv: Investigation) => void;
  onCancel: () => void;
}) {
  const { t } = useTranslation("process");
  const formSchema = useMemo(() => formSchemaIn(t), [t]);
  const create = useCreateInvestigation();
  const [withHeatDefects, setWithHeatDefects] = useState(true);
  const form = useForm<FormValues>({
    resolver: zodResolver(formSchema),
    defaultValues: {
      title: "",
      problemStatement: "",
      ownerId: people.some((p) => p.id === meId) ? meId : (people[0]?.id ?? ""),
      heats: heatNos.join(", "),
      defectIds: defects.map((d) => d.id),
      participantIds: [],
    },
  });
  const e = form.formState.errors;
  const chosenDefects = form.watch("defectIds");
  const participants = form.watch("participantIds");
  const ownerId = form.watch("ownerId");
  return (
    <RecordForm
      label={t("investigations.new.label")}
      form={form}
      mutation={create}
      toInput={(v) => ({
        title: v.title,
        problemStatement: v.problemStatement,
        ownerId: v.ownerId || undefined,
        heatNos: heatList(v.heats),
        defectIds: withHeatDefects ? [...new Set([...v.defectIds, ...heatDefectIds])] : v.defectIds,
        participantIds: v.participantIds.filter((p) => p !== v.ownerId),
      })}
      onSaved={onCreated}
      onCancel={onCancel}
      submitLabel={t("investigations.new.submit")}
      busyLabel={t("investigations.new.opening")}
    >
      <TextField
        label={t("investigations.new.title")}
        {...form.register("title")}
        error={e.title?.message}
        placeholder={t("investigations.new.titlePlaceholder")}
      />
      <TextAreaField
        id="inv-problem"
        label={t("investigations.detail.problemStatement")}
        rows={4}
        {...form.register("problemStatement")}
        className="rounded-md border border-ink-300 bg-white px-3 py-2 text-sm"
        placeholder={t("investigations.new.problemPlaceholder")}
        error={e.problemStatement?.message}
      />
      <div className="grid gap-4 md:grid-cols-2">
        <div className="flex flex-col gap-1">
          <label htmlFor="inv-owner" className="text-sm font-semibold text-ink-800">
            {t("investigations.table.owner")}
          </label>
          <select id="inv-owner" {...form.register("ownerId")} className={inputClass}>
            <PersonOptions people={people} />
          </select>
        </div>
        <TextField label={t("investigations.new.heats")} hint={t("investigations.new.heatsHint")} {...form.register("heats")} error={e.heats?.message} />
      </div>
      {heatDefectIds.length ? (
        <label className="flex min-h-11 items-center gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm" data-testid="include-heat-defects">
          <input type="checkbox" className="h-4 w-4" checked={withHeatDefects} onChange={(ev) => setWithHeatDefects(ev.target.checked)} />
          {t(heatNos.length === 1 ? "investigations.new.includeOneHeat" : "investigations.new.includeHeats", {
            count: heatDefectIds.length,
            n: count(heatDefectIds.length),
          })}
        </label>
      ) : null}
      {defects.length ? (
        <fieldset>
          <legend className="mb-1 text-sm font-semibold text-ink-800">{t("investigations.new.defects")}</legend>
          <div className="flex flex-wrap gap-2">
            {defects.map((d) => (
              <label key={d.id} className="flex min-h-11 items-center gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm">
                <input
                  type="checkbox"
                  className="h-4 w-4"
                  checked={chosenDefects.includes(d.id)}
                  onChange={(ev) => form.setValue("defectIds", ev.target.checked ? [...chosenDefects, d.id] : chosenDefects.filter((x) => x !== d.id))}
                />
                {d.label}
              </label>
            ))}
          </div>
        </fieldset>
      ) : null}
      <fieldset>
        <legend className="mb-1 text-sm font-semibold text-ink-800">{t("investigations.new.participants")}</legend>
        <div className="grid gap-1 sm:grid-cols-2 xl:grid-cols-3">
          {people
            .filter((p) => p.id !== ownerId)
            .map((p) => (
              <label key={p.id} className="flex min-h-11 items-center gap-2 rounded px-2 text-sm hover:bg-ink-50">
                <input
                  type="checkbox"
                  className="h-4 w-4"
                  checked={participants.includes(p.id)}
                  onChange={(ev) => form.setValue("participantIds", ev.target.checked ? [...participants, p.id] : participants.filter((x) => x !== p.id))}
                />
                {p.name}
              </label>
            ))}
        </div>
      </fieldset>
    </RecordForm>
  );
}
