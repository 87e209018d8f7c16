import { useMemo } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { z } from "zod";
import type { Claim } from "@shared/api/claims";
import { RecordForm, TextAreaField, todayInput } from "@/components/mutation-form";
import { fieldInputClass, TextField } from "@/components/ui/field";
import { ApiError } from "@/lib/api-client";
import { parseDecimal } from "@/lib/format";
import { friendlyErrors } from "@/lib/form-errors";
import { useCreateClaim } from "../api/claims.queries";
import { DateField } from "@/components/ui/date-field";

/** Ids as a person types or pastes them: commas, spaces, semicolons or new lines between. */
export const idList = (text: string) => [
  ...new Set(
    text
      .split(/[\s,;]+/)
      .map((s) => s.trim().toUpperCase())
      .filter(Boolean),
  ),
];

/** A quantity as typed, in the language's style (parseDecimal): empty is none. */
const toNumber = (s: string) => (s.trim() === "" ? null : parseDecimal(s));

/** The form's rules with their messages in the language shown (English as the shared schema says them). */
const formSchemaIn = (t: TFunction) => {
  const atMost = (max: number) => t("newClaim.errors.atMost", { max: String(max) });
  return z.object({
    claimNo: z.string().trim().min(2, t("newClaim.errors.claimNo")).max(40, atMost(40)),
    customer: z.string().trim().min(2, t("newClaim.errors.customer")).max(120, atMost(120)),
    products: z
      .string()
      .max(10_000, atMost(10_000))
      .refine((s) => idList(s).length <= 200, t("newClaim.errors.tooManyIds"))
      .refine((s) => idList(s).every((id) => id.length <= 40), t("newClaim.errors.idTooLong")),
    receivedOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, t("newClaim.errors.receivedOn")),
    defectComplained: z.string().trim().min(2, t("newClaim.errors.defectComplained")).max(500, atMost(500)),
    quantity: z.string().refine((s) => {
      const n = toNumber(s);
      return n === null || (Number.isFinite(n) && n >= 0 && n <= 100_000);
    }, t("newClaim.errors.quantity")),
    notes: z.string().max(5000, atMost(5000)),
    linkTraced: z.boolean(),
  });
};
type FormValues = z.infer<ReturnType<typeof formSchemaIn>>;

const areaClass = "rounded-md border border-ink-300 bg-white px-3 py-2 text-sm text-ink-900";

export function NewClaimForm({ onCreated, onCancel, initialProducts = "" }: { onCreated: (c: Claim) => void; onCancel: () => void; initialProducts?: string }) {
  const { t } = useTranslation("claims");
  const formSchema = useMemo(() => formSchemaIn(t), [t]);
  const create = useCreateClaim();
  const form = useForm<FormValues>({
    resolver: zodResolver(formSchema, friendlyErrors),
    defaultValues: {
      claimNo: "",
      customer: "",
      products: initialProducts,
      receivedOn: todayInput(),
      defectComplained: "",
      quantity: "",
      notes: "",
      linkTraced: true,
    },
  });
  const e = form.formState.errors;
  // The server's word on one field (a claim number already taken) shows under that field too.
  const field = create.error instanceof ApiError ? (create.error.details as { field?: string } | undefined)?.field : undefined;
  return (
    <RecordForm
      label={t("newClaim.formLabel")}
      form={form}
      mutation={create}
      toInput={(v) => ({
        claimNo: v.claimNo,
        customer: v.customer,
        productIds: idList(v.products),
        receivedOn: v.receivedOn,
        defectComplained: v.defectComplained,
        quantityT: toNumber(v.quantity),
        notes: v.notes.trim() || null,
        linkTraced: v.linkTraced,
      })}
      onSaved={onCreated}
      onCancel={onCancel}
      errorTitle={t("newClaim.notRecorded")}
      submitLabel={t("newClaim.submit")}
      busyLabel={t("newClaim.submitting")}
    >
      <div className="grid gap-4 md:grid-cols-2">
        <TextField
          label={t("newClaim.claimNo")}
          {...form.register("claimNo")}
          error={e.claimNo?.message ?? (field === "claimNo" ? create.error?.message : undefined)}
          placeholder={t("newClaim.claimNoPlaceholder")}
          autoCapitalize="characters"
        />
        <TextField label={t("newClaim.customer")} {...form.register("customer")} error={e.customer?.message} />
        <Controller
          control={form.control}
          name="receivedOn"
          render={({ field }) => (
            <DateField
              label={t("newClaim.receivedOn")}
              className="flex flex-col gap-1"
              labelClassName="text-sm font-semibold text-ink-800"
              inputClassName={fieldInputClass(e.receivedOn)}
              name={field.name}
              value={field.value}
              onChange={field.onChange}
              onBlur={field.onBlur}
              error={e.receivedOn?.message}
            />
          )}
        />
        <TextField
          label={t("newClaim.quantity")}
          inputMode="decimal"
          {...form.register("quantity")}
          error={e.quantity?.message}
          hint={t("newClaim.quantityHint")}
        />
      </div>
      <TextAreaField
        id="claim-products"
        label={t("newClaim.products")}
        rows={3}
        {...form.register("products")}
        className={`${areaClass} font-mono`}
        placeholder="K26000004, P26000001 …"
        hint={t("newClaim.productsHint")}
        error={e.products?.message}
      />
      <label className="flex min-h-11 items-center gap-3 text-sm">
        <input type="checkbox" className="h-5 w-5" {...form.register("linkTraced")} />
        <span>
          <Trans t={t} i18nKey="newClaim.linkTraced" components={{ 1: <span className="font-semibold" /> }} />
        </span>
      </label>
      <TextAreaField
        id="claim-defect"
        label={t("newClaim.defectComplained")}
        rows={2}
        {...form.register("defectComplained")}
        className={areaClass}
        placeholder={t("newClaim.defectComplainedPlaceholder")}
        error={e.defectComplained?.message}
      />
      <TextAreaField id="claim-notes" label={t("newClaim.notes")} rows={3} {...form.register("notes")} className={areaClass} error={e.notes?.message} />
    </RecordForm>
  );
}
