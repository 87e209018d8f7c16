import { useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { z } from "zod";
import { strandUpdateSchema, type StrandUpdate } from "@shared/api/heats";
import type { PlantSetup } from "@shared/api/plant";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { plural } from "@/lib/format";
import { useUpdateStrand } from "../api/setup.queries";
import { CalibrationEditor } from "./calibration-editor";

type Strand = PlantSetup["casters"][number]["strands"][number];
type FormValues = z.input<typeof strandUpdateSchema>;

const numberOrNull = (v: unknown) => (v === "" || v === null || v === undefined ? null : Number(v));
const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : Number(v));

/** One strand's mold, SEN and brake settings. Saving recomputes the derived values of its slabs. */
export function StrandSettingsForm({ casterCode, strand, onRecomputed }: { casterCode: string; strand: Strand; onRecomputed?: (n: number) => void }) {
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
    await save.mutateAsync({ id: strand.id, ...change });
    resetTo({ ...initial, ...values });
  });

  return (
    <form onSubmit={submit} noValidate className="space-y-4" aria-label={`Settings of ${casterCode} strand ${strand.strandNo}`}>
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label="Mold thickness (mm)"
          inputMode="decimal"
          {...form.register("moldThicknessMm", { setValueAs: number })}
          error={errors.moldThicknessMm?.message}
        />
        <TextField
          label="Effective mold length (mm)"
          inputMode="decimal"
          hint="Meniscus to mold exit"
          {...form.register("moldEffectiveLengthMm", { setValueAs: number })}
          error={errors.moldEffectiveLengthMm?.message}
        />
        <TextField
          label="Brake position (mm below the mold top)"
          inputMode="decimal"
          {...form.register("embrPositionMm", { setValueAs: numberOrNull })}
          error={errors.embrPositionMm?.message}
        />
        <TextField
          label="Narrowest slab width (mm)"
          inputMode="decimal"
          {...form.register("moldWidthMinMm", { setValueAs: numberOrNull })}
          error={errors.moldWidthMinMm?.message}
        />
        <TextField
          label="Widest slab width (mm)"
          inputMode="decimal"
          {...form.register("moldWidthMaxMm", { setValueAs: numberOrNull })}
          error={errors.moldWidthMaxMm?.message}
        />
        <div className="grid grid-cols-2 gap-3">
          <TextField
            label="SEN port area (mm²)"
            inputMode="decimal"
            {...form.register("senPortAreaMm2", { setValueAs: number })}
            error={errors.senPortAreaMm2?.message}
          />
          <TextField label="Ports" inputMode="numeric" {...form.register("senPortCount", { setValueAs: number })} error={errors.senPortCount?.message} />
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
            error={fieldState.error ? calibrationError(fieldState.error) : undefined}
          />
        )}
      />
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title="Saved">
          Strand {strand.strandNo}: {plural(save.data.slabsResolved, "slab")} recomputed with the new settings.
        </Notice>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
          {form.formState.isSubmitting ? "Saving and recomputing…" : `Save strand ${strand.strandNo}`}
        </Button>
        <Button variant="ghost" disabled={!form.formState.isDirty || form.formState.isSubmitting} onClick={() => resetTo()}>
          Undo changes
        </Button>
      </div>
    </form>
  );
}

/** A calibration error may sit deep (a point of the table): show the first message found. */
function calibrationError(err: unknown): string {
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
  return walk(err) ?? "Check the calibration values.";
}
