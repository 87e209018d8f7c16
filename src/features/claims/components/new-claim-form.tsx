import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { z } from "zod";
import type { Claim } from "@shared/api/claims";
import { RecordForm, TextAreaField, todayInput } from "@/components/mutation-form";
import { TextField } from "@/components/ui/field";
import { ApiError } from "@/lib/api-client";
import { friendlyErrors } from "@/lib/form-errors";
import { useCreateClaim } from "../api/claims.queries";

/** Ids as a person types or pastes them: commas, spaces, semicolons or new lines between. */
export const idList = (text: string) => [
  ...new Set(
    text
      .split(/[\s,;]+/)
      .map((s) => s.trim().toUpperCase())
      .filter(Boolean),
  ),
];

/** A quantity as typed: empty is none; a decimal comma is a decimal point. */
const toNumber = (s: string) => (s.trim() === "" ? null : Number(s.trim().replace(",", ".")));

const formSchema = z.object({
  claimNo: z.string().trim().min(2, "Give the claim number.").max(40),
  customer: z.string().trim().min(2, "Name the customer.").max(120),
  products: z
    .string()
    .max(10_000)
    .refine((s) => idList(s).length <= 200, "At most 200 coil or plate ids.")
    .refine((s) => idList(s).every((id) => id.length <= 40), "An id is at most 40 characters."),
  receivedOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "Give the date received."),
  defectComplained: z.string().trim().min(2, "Say what the customer complains of.").max(500),
  quantity: z.string().refine((s) => {
    const n = toNumber(s);
    return n === null || (Number.isFinite(n) && n >= 0 && n <= 100_000);
  }, "Give the quantity in tonnes, a number from 0 to 100 000, or leave it empty."),
  notes: z.string().max(5000),
  linkTraced: z.boolean(),
});
type FormValues = z.infer<typeof formSchema>;

const areaClass = "rounded-md border border-ink-300 bg-white px-3 py-2 text-sm text-ink-900";

export function NewClaimForm({ onCreated, onCancel, initialProducts = "" }: { onCreated: (c: Claim) => void; onCancel: () => void; initialProducts?: string }) {
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
      label="New claim"
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
      errorTitle="Not recorded"
      submitLabel="Record the claim"
      busyLabel="Recording…"
    >
      <div className="grid gap-4 md:grid-cols-2">
        <TextField
          label="Claim number"
          {...form.register("claimNo")}
          error={e.claimNo?.message ?? (field === "claimNo" ? create.error?.message : undefined)}
          placeholder="the customer's or your own reference"
          autoCapitalize="characters"
        />
        <TextField label="Customer" {...form.register("customer")} error={e.customer?.message} />
        <TextField label="Received on" type="date" {...form.register("receivedOn")} error={e.receivedOn?.message} />
        <TextField
          label="Quantity (t)"
          inputMode="decimal"
          {...form.register("quantity")}
          error={e.quantity?.message}
          hint="Tonnes claimed; leave empty if not known."
        />
      </div>
      <TextAreaField
        id="claim-products"
        label="Coil and plate ids"
        rows={3}
        {...form.register("products")}
        className={`${areaClass} font-mono`}
        placeholder="K26000004, P26000001 …"
        hint="Several at once: separate them with commas, spaces or new lines. Ids the rolling-mill trace does not know are kept on the claim and flagged."
        error={e.products?.message}
      />
      <label className="flex min-h-11 items-center gap-3 text-sm">
        <input type="checkbox" className="h-5 w-5" {...form.register("linkTraced")} />
        <span>
          <span className="font-semibold">Link the traced slabs</span> — each coil's or plate's slab is linked to the claim at once
        </span>
      </label>
      <TextAreaField
        id="claim-defect"
        label="Defect complained of"
        rows={2}
        {...form.register("defectComplained")}
        className={areaClass}
        placeholder="What the customer found, where, how much"
        error={e.defectComplained?.message}
      />
      <TextAreaField id="claim-notes" label="Notes (optional)" rows={3} {...form.register("notes")} className={areaClass} error={e.notes?.message} />
    </RecordForm>
  );
}
