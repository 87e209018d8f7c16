import { useForm, type Resolver } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { plantSettingsSchema, type PlantSettings } from "@shared/api/heats";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { plural } from "@/lib/format";
import { useSaveSettings } from "../api/setup.queries";

const ELEMENTS = [
  ["c", "C"],
  ["si", "Si"],
  ["mn", "Mn"],
  ["p", "P"],
  ["s", "S"],
  ["al", "Al"],
  ["cu", "Cu"],
  ["ni", "Ni"],
  ["cr", "Cr"],
  ["mo", "Mo"],
  ["ti", "Ti"],
  ["nb", "Nb"],
  ["v", "V"],
] as const;

const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : Number(v));
const optionalNumber = (v: unknown) => (v === "" || v === null || v === undefined ? undefined : Number(v));

function Group({ title, children, note }: { title: string; children: React.ReactNode; note?: React.ReactNode }) {
  return (
    <fieldset className="space-y-3 rounded-md border border-ink-200 p-3">
      <legend className="px-1 text-sm font-semibold text-ink-800">{title}</legend>
      {children}
      {note ? <p className="text-xs text-ink-600">{note}</p> : null}
    </fieldset>
  );
}

/** An element left empty is not part of the formula: drop its key (the schema's record takes no empty values). */
function withoutEmptyElements(values: PlantSettings): PlantSettings {
  const perPct = Object.fromEntries(Object.entries(values.liquidus.perPct ?? {}).filter(([, v]) => typeof v === "number" && !Number.isNaN(v)));
  return { ...values, liquidus: { ...values.liquidus, perPct } };
}
/** The form holds a key for every element (empty ones undefined), so "changed" compares like with like. */
function withEveryElement(values: PlantSettings): PlantSettings {
  const perPct = Object.fromEntries(ELEMENTS.map(([k]) => [k, values.liquidus.perPct?.[k]]));
  return { ...values, liquidus: { ...values.liquidus, perPct } };
}
const zod = zodResolver(plantSettingsSchema, friendlyErrors);
const resolver: Resolver<PlantSettings> = (values, context, options) => zod(withoutEmptyElements(values), context, options);

/** The formula settings of the plant. Saving recomputes every slab's derived values. */
export function PlantSettingsForm({ settings, onRecomputed }: { settings: PlantSettings; onRecomputed?: (n: number) => void }) {
  const save = useSaveSettings({ onRecomputed });
  const form = useForm<PlantSettings>({ resolver, defaultValues: withEveryElement(settings) });
  const e = form.formState.errors;
  const coeffs = form.watch("liquidus");
  const formula = `T_L = ${coeffs.baseC} − (${ELEMENTS.filter(([k]) => Number.isFinite(coeffs.perPct?.[k] as number) && coeffs.perPct?.[k] !== undefined)
    .map(([k, sym]) => `${coeffs.perPct[k]} ${sym}`)
    .join(" + ")})`;

  return (
    <form
      noValidate
      aria-label="Plant settings"
      className="space-y-4"
      onSubmit={form.handleSubmit(async (values) => {
        const out = await save.mutateAsync(withoutEmptyElements(values));
        form.reset(withEveryElement(out.settings));
      })}
    >
      <Group title="Liquidus temperature (°C, contents in wt %)" note={<span className="font-mono">{formula}</span>}>
        <div className="grid gap-3 sm:grid-cols-[10rem_1fr]">
          <TextField label="Base (°C)" inputMode="decimal" {...form.register("liquidus.baseC", { setValueAs: number })} error={e.liquidus?.baseC?.message} />
          <TextField label="Source of the coefficients" {...form.register("liquidus.source")} error={e.liquidus?.source?.message} />
        </div>
        <div className="grid grid-cols-3 gap-3 sm:grid-cols-5 lg:grid-cols-7">
          {ELEMENTS.map(([k, sym]) => (
            <TextField
              key={k}
              label={`${sym} (°C per %)`}
              inputMode="decimal"
              {...form.register(`liquidus.perPct.${k}`, { setValueAs: optionalNumber })}
              error={e.liquidus?.perPct?.[k]?.message}
            />
          ))}
        </div>
        <p className="text-xs text-ink-600">
          Leave an element empty to keep it out of the formula. A heat with a liquidus given in its record keeps that value.
        </p>
      </Group>
      <div className="grid gap-4 lg:grid-cols-3">
        <Group title="Shell growth K (mm/√min)" note="Shell thickness s = K · √t, t the time in the mold or along the strand.">
          <TextField
            label="In the mold"
            inputMode="decimal"
            {...form.register("shellK.moldMmPerSqrtMin", { setValueAs: number })}
            error={e.shellK?.moldMmPerSqrtMin?.message}
          />
          <TextField
            label="Along the strand"
            inputMode="decimal"
            {...form.register("shellK.strandMmPerSqrtMin", { setValueAs: number })}
            error={e.shellK?.strandMmPerSqrtMin?.message}
          />
        </Group>
        <Group title="Steel density (t/m³)" note="Solid for slab weights and throughput; liquid for the volume flow through the SEN ports.">
          <TextField
            label="Solid slab"
            inputMode="decimal"
            {...form.register("density.solidTPerM3", { setValueAs: number })}
            error={e.density?.solidTPerM3?.message}
          />
          <TextField
            label="Liquid steel"
            inputMode="decimal"
            {...form.register("density.liquidTPerM3", { setValueAs: number })}
            error={e.density?.liquidTPerM3?.message}
          />
        </Group>
        <Group title="Liquid steel for the brake numbers" note="Used in the Stuart and Hartmann numbers.">
          <TextField
            label="Electrical conductivity σ (S/m)"
            inputMode="decimal"
            {...form.register("steelProperties.conductivitySPerM", { setValueAs: number })}
            error={e.steelProperties?.conductivitySPerM?.message}
          />
          <TextField
            label="Density ρ (kg/m³)"
            inputMode="decimal"
            {...form.register("steelProperties.densityKgPerM3", { setValueAs: number })}
            error={e.steelProperties?.densityKgPerM3?.message}
          />
          <TextField
            label="Viscosity μ (Pa·s)"
            inputMode="decimal"
            {...form.register("steelProperties.viscosityPaS", { setValueAs: number })}
            error={e.steelProperties?.viscosityPaS?.message}
          />
        </Group>
      </div>
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title="Saved">
          {plural(save.data.slabsResolved, "slab")} recomputed with the new settings.
        </Notice>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
          {form.formState.isSubmitting ? "Saving and recomputing every slab…" : "Save plant settings"}
        </Button>
        <Button variant="ghost" disabled={!form.formState.isDirty || form.formState.isSubmitting} onClick={() => form.reset()}>
          Undo changes
        </Button>
      </div>
    </form>
  );
}
