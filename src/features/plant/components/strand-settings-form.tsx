import { useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { z } from "zod";
import { strandUpdateSchema, type StrandUpdate } from "@shared/api/heats";
import type { PlantSetup } from "@shared/api/plant";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { formMessage, useFormMessage } from "@/features/users/components/form-messages";
import { friendlyErrors } from "@/lib/form-errors";
import { count, parseDecimal } from "@/lib/format";
import { useUpdateStrand } from "../api/setup.queries";
import { CalibrationEditor } from "./calibration-editor";
import { settled } from "@/components/mutation-form";

type Strand = PlantSetup["casters"][number]["strands"][number];
type FormValues = z.input<typeof strandUpdateSchema>;

const numberOrNull = (v: unknown) => (v === "" || v === null || v === undefined ? null : typeof v === "string" ? parseDecimal(v) : Number(v));
const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : typeof v === "string" ? parseDecimal(v) : Number(v));

/** One strand's mold, SEN and brake settings. Saving recomputes the derived values of its slabs. */
export function StrandSettingsForm({ casterCode, strand, onRecomputed }: { casterCode: string; strand: Strand; onRecomputed?: (n: number) => void }) {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const save = useUpdateStrand({ onRecomputed });
  const { id: _id, strandNo: _no, ...initial } = strand;
  const form = useForm<FormValues, unknown, StrandUpdate>({ resolver: zodResolver(strandUpdateSchema, friendlyErrors), defaultValues: initial });
  const errors = form.formState.errors;
  const prefix = `strand-${strand.id}`;
  // The calibration editor keeps its own input text: a reset gives it a fresh start.
  const [resets, setResets] = useState(0);
  const resetTo = (values?: FormValues) => {
    form.reset(values);
    setResets((n) => n + 1);
  };

  const submit = form.handleSubmit(async (values) => {
    // Send only what changed, so the audit trail says exactly what was edited.
    const dirty = form.formState.dirtyFields as Partial<Record<keyof StrandUpdate, unknown>>;
    const change = Object.fromEntries(Object.entries(values).filter(([k]) => dirty[k as keyof StrandUpdate])) as StrandUpdate;
    if (Object.keys(change).length === 0) return;
    if (await settled(save.mutateAsync({ id: strand.id, ...change }))) resetTo({ ...initial, ...values });
  });

  return (
    <form onSubmit={submit} noValidate className="space-y-4" aria-label={t("plant.strand.formLabel", { caster: casterCode, strand: strand.strandNo })}>
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label={t("plant.strand.moldThickness")}
          inputMode="decimal"
          {...form.register("moldThicknessMm", { setValueAs: number })}
          error={message(errors.moldThicknessMm?.message)}
        />
        <TextField
          label={t("plant.strand.moldLength")}
          inputMode="decimal"
          hint={t("plant.strand.moldLengthHint")}
          {...form.register("moldEffectiveLengthMm", { setValueAs: number })}
          error={message(errors.moldEffectiveLengthMm?.message)}
        />
        <TextField
          label={t("plant.strand.brakePosition")}
          inputMode="decimal"
          {...form.register("embrPositionMm", { setValueAs: numberOrNull })}
          error={message(errors.embrPositionMm?.message)}
        />
        <TextField
          label={t("plant.strand.narrowest")}
          inputMode="decimal"
          {...form.register("moldWidthMinMm", { setValueAs: numberOrNull })}
          error={message(errors.moldWidthMinMm?.message)}
        />
        <TextField
          label={t("plant.strand.widest")}
          inputMode="decimal"
          {...form.register("moldWidthMaxMm", { setValueAs: numberOrNull })}
          error={message(errors.moldWidthMaxMm?.message)}
        />
        <div className="grid grid-cols-2 gap-3">
          <TextField
            label={t("plant.strand.portArea")}
            inputMode="decimal"
            {...form.register("senPortAreaMm2", { setValueAs: number })}
            error={message(errors.senPortAreaMm2?.message)}
          />
          <TextField
            label={t("plant.strand.ports")}
            inputMode="numeric"
            {...form.register("senPortCount", { setValueAs: number })}
            error={message(errors.senPortCount?.message)}
          />
        </div>
      </div>
      <Controller
        control={form.control}
        name="embrCalibration"
        render={({ field, fieldState }) => (
          <CalibrationEditor
            key={resets}
            idPrefix={prefix}
            value={field.value as NonNullable<FormValues["embrCalibration"]>}
            onChange={field.onChange}
            error={fieldState.error ? calibrationError(t, fieldState.error) : undefined}
          />
        )}
      />
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title={t("plant.strand.saved")}>
          {t("plant.strand.recomputed", { strand: strand.strandNo, count: save.data.slabsResolved, n: count(save.data.slabsResolved) })}
        </Notice>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
          {form.formState.isSubmitting ? t("plant.strand.saving") : t("plant.strand.save", { strand: strand.strandNo })}
        </Button>
        <Button variant="ghost" disabled={!form.formState.isDirty || form.formState.isSubmitting} onClick={() => resetTo()}>
          {t("plant.strand.undo")}
        </Button>
      </div>
    </form>
  );
}

/** A calibration error may sit deep (a point of the table): show the first message found, in the language shown. */
function calibrationError(t: TFunction, err: unknown): string {
  const seen = new Set<unknown>();
  const walk = (e: unknown): string | undefined => {
    if (!e || typeof e !== "object" || seen.has(e)) return undefined;
    seen.add(e);
    const m = (e as { message?: unknown }).message;
    if (typeof m === "string" && m) return m;
    for (const v of Object.values(e)) {
      const found = walk(v);
      if (found) return found;
    }
    return undefined;
  };
  return formMessage(t, walk(err)) ?? t("validation.checkCalibration");
}
