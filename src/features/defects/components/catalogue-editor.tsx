import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { z } from "zod";
import { defectCategoryInputSchema, defectTypeInputSchema, type DefectType } from "@shared/api/defects";
import { schemaMessage } from "@shared/i18n/schema-messages";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { ActiveMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { friendlyErrors } from "@/lib/form-errors";
import { useCreateCategory, useCreateType, useUpdateCategory, useUpdateType } from "../api/catalogue.queries";

interface Category {
  code: string;
  name: string;
  sortOrder: number;
  active: boolean;
}

const message = (err: unknown) => (err instanceof ApiError || err instanceof Error ? err.message : String(err));

const select = "min-h-11 rounded-md border border-ink-300 bg-white px-3 text-ink-900";

/** A form's words, with the shared schemas' own messages (catalogue `schema`). */
type FormWords = TFunction<["review", "schema"]>;

/** A message written into a shared schema (a code's characters…) in the language shown; any other as it is. */
const fieldError = (t: FormWords, message: string | undefined) => (message ? schemaMessage((key, options) => t(key, options), message) : undefined);

function CategorySelect({
  id,
  value,
  onChange,
  categories,
  label,
}: {
  id: string;
  value: string;
  onChange: (v: string) => void;
  categories: Category[];
  label: string;
}) {
  const { t } = useTranslation("review");
  const retired = t("catalogue.retiredSuffix");
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <select id={id} value={value} onChange={(e) => onChange(e.target.value)} className={select}>
        {categories.map((c) => (
          <option key={c.code} value={c.code}>
            {c.name}
            {c.active ? "" : retired}
          </option>
        ))}
      </select>
    </div>
  );
}

type TypeInput = z.input<typeof defectTypeInputSchema>;

function NewTypeForm({ categories }: { categories: Category[] }) {
  const { t } = useTranslation(["review", "schema"]);
  const create = useCreateType();
  const form = useForm<TypeInput>({
    resolver: zodResolver(defectTypeInputSchema, friendlyErrors),
    defaultValues: { code: "", name: "", categoryCode: categories.find((c) => c.active)?.code ?? "", description: null },
  });
  const submit = form.handleSubmit(async (values) => {
    try {
      await create.mutateAsync({ ...values, code: values.code.toUpperCase(), description: values.description || null });
      form.reset({ code: "", name: "", categoryCode: values.categoryCode, description: null });
    } catch (err) {
      if (err instanceof ApiError && err.status === 409) form.setError("code", { message: err.message });
    }
  });
  const categoryCode = form.watch("categoryCode");
  return (
    <form onSubmit={submit} noValidate className="space-y-3" aria-label={t("catalogue.newType")}>
      {create.error && !(create.error instanceof ApiError && create.error.status === 409) ? <Notice tone="error">{message(create.error)}</Notice> : null}
      <div className="grid gap-3 sm:grid-cols-[minmax(0,7rem)_minmax(0,1fr)]">
        <TextField
          label={t("catalogue.code")}
          autoCapitalize="characters"
          {...form.register("code")}
          error={fieldError(t, form.formState.errors.code?.message)}
          hint={t("catalogue.codeHint")}
        />
        <TextField label={t("catalogue.name")} {...form.register("name")} error={fieldError(t, form.formState.errors.name?.message)} />
      </div>
      <CategorySelect
        id="new-type-category"
        label={t("catalogue.category")}
        value={categoryCode}
        onChange={(v) => form.setValue("categoryCode", v)}
        categories={categories.filter((c) => c.active)}
      />
      <TextField
        label={t("catalogue.descriptionOptional")}
        {...form.register("description")}
        error={fieldError(t, form.formState.errors.description?.message)}
      />
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? t("catalogue.adding") : t("catalogue.addType")}
      </Button>
    </form>
  );
}

type CategoryInput = z.input<typeof defectCategoryInputSchema>;

function NewCategoryForm({ nextOrder }: { nextOrder: number }) {
  const { t } = useTranslation(["review", "schema"]);
  const create = useCreateCategory();
  const form = useForm<CategoryInput>({
    resolver: zodResolver(defectCategoryInputSchema, friendlyErrors),
    defaultValues: { code: "", name: "", sortOrder: nextOrder },
  });
  const submit = form.handleSubmit(async (values) => {
    try {
      await create.mutateAsync({ ...values, code: values.code.toUpperCase() });
      form.reset({ code: "", name: "", sortOrder: (values.sortOrder ?? nextOrder) + 1 });
    } catch (err) {
      if (err instanceof ApiError && err.status === 409) form.setError("code", { message: err.message });
    }
  });
  return (
    <form onSubmit={submit} noValidate className="space-y-3" aria-label={t("catalogue.newCategory")}>
      {create.error && !(create.error instanceof ApiError && create.error.status === 409) ? <Notice tone="error">{message(create.error)}</Notice> : null}
      <div className="grid gap-3 grid-cols-[minmax(0,6rem)_minmax(0,1fr)_minmax(0,5rem)]">
        <TextField
          label={t("catalogue.code")}
          autoCapitalize="characters"
          {...form.register("code")}
          error={fieldError(t, form.formState.errors.code?.message)}
        />
        <TextField label={t("catalogue.name")} {...form.register("name")} error={fieldError(t, form.formState.errors.name?.message)} />
        <TextField
          label={t("catalogue.order")}
          type="number"
          {...form.register("sortOrder", { valueAsNumber: true })}
          error={fieldError(t, form.formState.errors.sortOrder?.message)}
        />
      </div>
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? t("catalogue.adding") : t("catalogue.addCategory")}
      </Button>
    </form>
  );
}

type Words = TFunction<"review">;

function TypeRow({ t, categories, words }: { t: DefectType; categories: Category[]; words: Words }) {
  const update = useUpdateType();
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState(t.name);
  const [categoryCode, setCategoryCode] = useState(t.categoryCode);
  const [description, setDescription] = useState(t.description ?? "");
  const save = async () => {
    const changes: Record<string, unknown> = {};
    if (name.trim() !== t.name) changes.name = name.trim();
    if (categoryCode !== t.categoryCode) changes.categoryCode = categoryCode;
    if ((description.trim() || null) !== t.description) changes.description = description.trim() || null;
    try {
      if (Object.keys(changes).length) await update.mutateAsync({ code: t.code, changes });
      setEditing(false);
    } catch {
      // the error shows under the row; the form stays open
    }
  };
  return (
    <li className="space-y-2 py-3" data-testid={`type-${t.code}`}>
      <div className="flex flex-wrap items-center gap-3">
        <span
          className={`min-w-14 rounded px-1.5 py-1 text-center text-xs font-bold tracking-wider ${t.active ? "bg-ink-900 text-white" : "border border-ink-400 text-ink-600"}`}
        >
          {t.code}
        </span>
        <span className="min-w-0 flex-1">
          <span className={`block font-semibold ${t.active ? "" : "text-ink-600 line-through decoration-1"}`}>{t.name}</span>
          {t.description ? <span className="block text-sm text-ink-600">{t.description}</span> : null}
        </span>
        <ActiveMark active={t.active} />
        <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-expanded={editing} aria-label={words("catalogue.editLabel", { code: t.code })}>
          {words("catalogue.edit")}
        </Button>
        <Button
          variant={t.active ? "ghost" : "secondary"}
          disabled={update.isPending}
          onClick={() => update.mutate({ code: t.code, changes: { active: !t.active } })}
          aria-label={t.active ? words("catalogue.retireLabel", { code: t.code }) : words("catalogue.reactivateLabel", { code: t.code })}
        >
          {t.active ? words("catalogue.retire") : words("catalogue.reactivate")}
        </Button>
      </div>
      {editing ? (
        <div className="grid gap-3 rounded-md border border-ink-200 bg-ink-50 p-3 md:grid-cols-[1fr_1fr]">
          <TextField label={words("catalogue.nameOf", { code: t.code })} value={name} onChange={(e) => setName(e.target.value)} />
          <CategorySelect id={`cat-${t.code}`} label={words("catalogue.category")} value={categoryCode} onChange={setCategoryCode} categories={categories} />
          <TextField label={words("catalogue.description")} className="md:col-span-2" value={description} onChange={(e) => setDescription(e.target.value)} />
          <div className="flex gap-2 md:col-span-2">
            <Button onClick={() => void save()} disabled={update.isPending || !name.trim()}>
              {words("catalogue.save")}
            </Button>
            <Button variant="ghost" onClick={() => setEditing(false)}>
              {words("catalogue.cancel")}
            </Button>
          </div>
        </div>
      ) : null}
      {update.error ? <Notice tone="error">{message(update.error)}</Notice> : null}
    </li>
  );
}

function CategoryRow({ c, count, words: t }: { c: Category; count: number; words: Words }) {
  const update = useUpdateCategory();
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState(c.name);
  const [order, setOrder] = useState(String(c.sortOrder));
  const save = async () => {
    const changes: { name?: string; sortOrder?: number } = {};
    if (name.trim() !== c.name) changes.name = name.trim();
    if (Number(order) !== c.sortOrder && Number.isInteger(Number(order))) changes.sortOrder = Number(order);
    try {
      if (Object.keys(changes).length) await update.mutateAsync({ code: c.code, changes });
      setEditing(false);
    } catch {
      // the error shows under the row; the form stays open
    }
  };
  return (
    <li className="space-y-2 py-3" data-testid={`category-${c.code}`}>
      <div className="flex flex-wrap items-center gap-3">
        <span className="w-8 text-right text-sm tabular-nums text-ink-600">{c.sortOrder}</span>
        <span className="min-w-0 flex-1">
          <span className="block font-semibold">{c.name}</span>
          <span className="block text-xs text-ink-600">{t("catalogue.categoryTypes", { code: c.code, count })}</span>
        </span>
        <ActiveMark active={c.active} />
        <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-label={t("catalogue.renameLabel", { code: c.code })}>
          {t("catalogue.rename")}
        </Button>
        <Button
          variant={c.active ? "ghost" : "secondary"}
          disabled={update.isPending}
          onClick={() => update.mutate({ code: c.code, changes: { active: !c.active } })}
          aria-label={c.active ? t("catalogue.retireCategoryLabel", { code: c.code }) : t("catalogue.reactivateCategoryLabel", { code: c.code })}
        >
          {c.active ? t("catalogue.retire") : t("catalogue.reactivate")}
        </Button>
      </div>
      {editing ? (
        <div className="grid gap-3 rounded-md border border-ink-200 bg-ink-50 p-3 md:grid-cols-[1fr_8rem_auto] md:items-end">
          <TextField label={t("catalogue.nameOf", { code: c.code })} value={name} onChange={(e) => setName(e.target.value)} />
          <TextField label={t("catalogue.order")} type="number" value={order} onChange={(e) => setOrder(e.target.value)} />
          <Button onClick={() => void save()} disabled={update.isPending || !name.trim()}>
            {t("catalogue.save")}
          </Button>
        </div>
      ) : null}
      {update.error ? <Notice tone="error">{message(update.error)}</Notice> : null}
    </li>
  );
}

/** The defect catalogue: categories and their types. Retired entries stay for the record and leave the yard's list. */
export function CatalogueEditor({ types, categories }: { types: DefectType[]; categories: Category[] }) {
  const { t } = useTranslation("review");
  const sorted = [...categories].sort((a, b) => a.sortOrder - b.sortOrder || a.name.localeCompare(b.name));
  const [filter, setFilter] = useState("");
  const f = filter.trim().toLowerCase();
  const shown = types.filter((d) => !f || d.code.toLowerCase().includes(f) || d.name.toLowerCase().includes(f));
  return (
    <div className="grid gap-5 lg:grid-cols-[minmax(0,3fr)_minmax(20rem,2fr)]">
      <div className="space-y-5">
        <Card title={t("catalogue.typesTitle", { inUse: types.filter((d) => d.active).length, retired: types.filter((d) => !d.active).length })}>
          <div className="space-y-4">
            <TextField label={t("catalogue.find")} type="search" value={filter} onChange={(e) => setFilter(e.target.value)} />
            {sorted.map((c) => {
              const list = shown.filter((t) => t.categoryCode === c.code);
              if (list.length === 0) return null;
              return (
                <section key={c.code} aria-label={c.name}>
                  <h3 className="border-b-2 border-ink-200 pb-1 text-sm font-bold uppercase tracking-wide text-ink-700">{c.name}</h3>
                  <ul className="divide-y divide-ink-100">
                    {list.map((d) => (
                      <TypeRow key={d.code} t={d} categories={sorted} words={t} />
                    ))}
                  </ul>
                </section>
              );
            })}
          </div>
        </Card>
      </div>
      <div className="space-y-5">
        <Card title={t("catalogue.addTypeTitle")}>
          <NewTypeForm categories={sorted} />
        </Card>
        <Card title={t("catalogue.categories")}>
          <ul className="divide-y divide-ink-100">
            {sorted.map((c) => (
              <CategoryRow key={c.code} c={c} count={types.filter((d) => d.categoryCode === c.code).length} words={t} />
            ))}
          </ul>
        </Card>
        <Card title={t("catalogue.addCategoryTitle")}>
          <NewCategoryForm nextOrder={Math.max(0, ...categories.map((c) => c.sortOrder)) + 1} />
        </Card>
      </div>
    </div>
  );
}
