import { useForm, type Resolver } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import { plantSettingsSchema, type PlantSettings } from "@shared/api/heats";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useFormMessage } from "@/features/users/components/form-messages";
import { friendlyErrors } from "@/lib/form-errors";
import { count, inputNumber, localeOf, parseDecimal } from "@/lib/format";
import { useSaveSettings } from "../api/setup.queries";
import { settled } from "@/components/mutation-form";

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

const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : typeof v === "string" ? parseDecimal(v) : Number(v));
const optionalNumber = (v: unknown) => (v === "" || v === null || v === undefined ? undefined : typeof v === "string" ? parseDecimal(v) : Number(v));

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
  const { t, i18n } = useTranslation("admin");
  const message = useFormMessage();
  const save = useSaveSettings({ onRecomputed });
  const locale = localeOf(i18n.language);
  const form = useForm<PlantSettings>({ resolver, defaultValues: withEveryElement(settings) });
  const e = form.formState.errors;
  const coeffs = form.watch("liquidus");
  const formula = `T_L = ${inputNumber(coeffs.baseC, locale)} − (${ELEMENTS.filter(
    ([k]) => Number.isFinite(coeffs.perPct?.[k] as number) && coeffs.perPct?.[k] !== undefined,
  )
    .map(([k, sym]) => `${inputNumber(coeffs.perPct[k], locale)} ${sym}`)
    .join(" + ")})`;

  return (
    <form
      noValidate
      aria-label={t("plant.settings.formLabel")}
      className="space-y-4"
      onSubmit={form.handleSubmit(async (values) => {
        const saved = await settled(save.mutateAsync(withoutEmptyElements(values)));
        if (saved) form.reset(withEveryElement(saved.value.settings));
      })}
    >
      <Group title={t("plant.settings.liquidus")} note={<span className="font-mono">{formula}</span>}>
        <div className="grid gap-3 sm:grid-cols-[10rem_1fr]">
          <TextField
            label={t("plant.settings.base")}
            inputMode="decimal"
            {...form.register("liquidus.baseC", { setValueAs: number })}
            error={message(e.liquidus?.baseC?.message)}
          />
          <TextField label={t("plant.settings.source")} {...form.register("liquidus.source")} error={message(e.liquidus?.source?.message)} />
        </div>
        <div className="grid grid-cols-3 gap-3 sm:grid-cols-5 lg:grid-cols-7">
          {ELEMENTS.map(([k, sym]) => (
            <TextField
              key={k}
              label={t("plant.settings.perElement", { element: sym })}
              inputMode="decimal"
              {...form.register(`liquidus.perPct.${k}`, { setValueAs: optionalNumber })}
              error={message(e.liquidus?.perPct?.[k]?.message)}
            />
          ))}
        </div>
        <p className="text-xs text-ink-600">{t("plant.settings.emptyElement")}</p>
      </Group>
      <div className="grid gap-4 lg:grid-cols-3">
        <Group title={t("plant.settings.shellGrowth")} note={t("plant.settings.shellGrowthNote")}>
          <TextField
            label={t("plant.settings.inMold")}
            inputMode="decimal"
            {...form.register("shellK.moldMmPerSqrtMin", { setValueAs: number })}
            error={message(e.shellK?.moldMmPerSqrtMin?.message)}
          />
          <TextField
            label={t("plant.settings.alongStrand")}
            inputMode="decimal"
            {...form.register("shellK.strandMmPerSqrtMin", { setValueAs: number })}
            error={message(e.shellK?.strandMmPerSqrtMin?.message)}
          />
        </Group>
        <Group title={t("plant.settings.density")} note={t("plant.settings.densityNote")}>
          <TextField
            label={t("plant.settings.solid")}
            inputMode="decimal"
            {...form.register("density.solidTPerM3", { setValueAs: number })}
            error={message(e.density?.solidTPerM3?.message)}
          />
          <TextField
            label={t("plant.settings.liquid")}
            inputMode="decimal"
            {...form.register("density.liquidTPerM3", { setValueAs: number })}
            error={message(e.density?.liquidTPerM3?.message)}
          />
        </Group>
        <Group title={t("plant.settings.brake")} note={t("plant.settings.brakeNote")}>
          <TextField
            label={t("plant.settings.conductivity")}
            inputMode="decimal"
            {...form.register("steelProperties.conductivitySPerM", { setValueAs: number })}
            error={message(e.steelProperties?.conductivitySPerM?.message)}
          />
          <TextField
            label={t("plant.settings.densityRho")}
            inputMode="decimal"
            {...form.register("steelProperties.densityKgPerM3", { setValueAs: number })}
            error={message(e.steelProperties?.densityKgPerM3?.message)}
          />
          <TextField
            label={t("plant.settings.viscosity")}
            inputMode="decimal"
            {...form.register("steelProperties.viscosityPaS", { setValueAs: number })}
            error={message(e.steelProperties?.viscosityPaS?.message)}
          />
        </Group>
      </div>
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title={t("plant.settings.saved")}>
          {t("plant.settings.recomputed", { count: save.data.slabsResolved, n: count(save.data.slabsResolved) })}
        </Notice>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
          {form.formState.isSubmitting ? t("plant.settings.saving") : t("plant.settings.save")}
        </Button>
        <Button variant="ghost" disabled={!form.formState.isDirty || form.formState.isSubmitting} onClick={() => form.reset()}>
          {t("plant.settings.undo")}
        </Button>
      </div>
    </form>
  );
}
