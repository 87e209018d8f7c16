import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { YARD_WINDOW_MAX_HOURS, yardSettingsSchema, type YardSettings } from "@shared/api/yard";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { useSaveYardSettings } from "../api/yard.queries";
import { parseDecimal } from "@/lib/format";
import { settled } from "@/components/mutation-form";

const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : typeof v === "string" ? parseDecimal(v) : Number(v));

/** The shared schema's own messages (English, also the server's) in the language shown; any other as it is. */
function settingsError(t: TFunction, message: string | undefined): string | undefined {
  if (!message) return message;
  if (message === "Give a whole number of hours.") return t("settings.wholeHours");
  if (message === "At least 1 hour.") return t("settings.atLeastOne");
  if (message === `At most ${YARD_WINDOW_MAX_HOURS} hours (14 days).`)
    return t("settings.atMost", { max: YARD_WINDOW_MAX_HOURS, days: YARD_WINDOW_MAX_HOURS / 24 });
  return message;
}

/** How many hours of cast slabs the yard tablets keep for offline use (audited like the other settings). */
export function YardSettingsForm({ settings }: { settings: YardSettings }) {
  const { t } = useTranslation("yard");
  const save = useSaveYardSettings();
  const form = useForm<YardSettings>({ resolver: zodResolver(yardSettingsSchema, friendlyErrors), defaultValues: settings });
  return (
    <form
      noValidate
      aria-label={t("settings.formLabel")}
      className="space-y-3"
      onSubmit={form.handleSubmit(async (values) => {
        const saved = await settled(save.mutateAsync(values));
        if (saved) form.reset(saved.value);
      })}
    >
      <div className="max-w-xs">
        <TextField
          label={t("settings.windowLabel")}
          inputMode="numeric"
          {...form.register("syncWindowHours", { setValueAs: number })}
          error={settingsError(t, form.formState.errors.syncWindowHours?.message)}
          hint={t("settings.windowHint")}
        />
      </div>
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title={t("settings.saved")}>
          {t("settings.savedText")}
        </Notice>
      ) : null}
      <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
        {t("settings.save")}
      </Button>
    </form>
  );
}
