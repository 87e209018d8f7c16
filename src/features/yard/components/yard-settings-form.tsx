import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { yardSettingsSchema, type YardSettings } from "@shared/api/yard";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { useSaveYardSettings } from "../api/yard.queries";

const number = (v: unknown) => (v === "" || v === null || v === undefined ? Number.NaN : Number(v));

/** How many hours of cast slabs the yard tablets keep for offline use (audited like the other settings). */
export function YardSettingsForm({ settings }: { settings: YardSettings }) {
  const save = useSaveYardSettings();
  const form = useForm<YardSettings>({ resolver: zodResolver(yardSettingsSchema, friendlyErrors), defaultValues: settings });
  return (
    <form
      noValidate
      aria-label="Yard tablet settings"
      className="space-y-3"
      onSubmit={form.handleSubmit(async (values) => form.reset(await save.mutateAsync(values)))}
    >
      <div className="max-w-xs">
        <TextField
          label="Slabs cast in the last … hours"
          inputMode="numeric"
          {...form.register("syncWindowHours", { setValueAs: number })}
          error={form.formState.errors.syncWindowHours?.message}
          hint="1 to 336 hours. Every slab not inspected yet goes to the tablets as well."
        />
      </div>
      {save.isError ? <Notice tone="error">{save.error.message}</Notice> : null}
      {save.isSuccess && !form.formState.isDirty ? (
        <Notice tone="ok" title="Saved">
          Tablets take the new window at their next sync.
        </Notice>
      ) : null}
      <Button type="submit" disabled={!form.formState.isDirty || form.formState.isSubmitting}>
        Save yard settings
      </Button>
    </form>
  );
}
