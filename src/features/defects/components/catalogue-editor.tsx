import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { z } from "zod";
import { defectCategoryInputSchema, defectTypeInputSchema, type DefectType } from "@shared/api/defects";
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
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <select id={id} value={value} onChange={(e) => onChange(e.target.value)} className={select}>
        {categories.map((c) => (
          <option key={c.code} value={c.code}>
            {c.name}
            {c.active ? "" : " (retired)"}
          </option>
        ))}
      </select>
    </div>
  );
}

type TypeInput = z.input<typeof defectTypeInputSchema>;

function NewTypeForm({ categories }: { categories: Category[] }) {
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
    <form onSubmit={submit} noValidate className="space-y-3" aria-label="New defect type">
      {create.error && !(create.error instanceof ApiError && create.error.status === 409) ? <Notice tone="error">{message(create.error)}</Notice> : null}
      <div className="grid gap-3 sm:grid-cols-[minmax(0,7rem)_minmax(0,1fr)]">
        <TextField
          label="Code"
          autoCapitalize="characters"
          {...form.register("code")}
          error={form.formState.errors.code?.message}
          hint="e.g. LFC; cannot change later"
        />
        <TextField label="Name" {...form.register("name")} error={form.formState.errors.name?.message} />
      </div>
      <CategorySelect
        id="new-type-category"
        label="Category"
        value={categoryCode}
        onChange={(v) => form.setValue("categoryCode", v)}
        categories={categories.filter((c) => c.active)}
      />
      <TextField label="Description (optional)" {...form.register("description")} error={form.formState.errors.description?.message} />
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? "Adding…" : "Add type"}
      </Button>
    </form>
  );
}

type CategoryInput = z.input<typeof defectCategoryInputSchema>;

function NewCategoryForm({ nextOrder }: { nextOrder: number }) {
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
    <form onSubmit={submit} noValidate className="space-y-3" aria-label="New category">
      {create.error && !(create.error instanceof ApiError && create.error.status === 409) ? <Notice tone="error">{message(create.error)}</Notice> : null}
      <div className="grid gap-3 grid-cols-[minmax(0,6rem)_minmax(0,1fr)_minmax(0,5rem)]">
        <TextField label="Code" autoCapitalize="characters" {...form.register("code")} error={form.formState.errors.code?.message} />
        <TextField label="Name" {...form.register("name")} error={form.formState.errors.name?.message} />
        <TextField label="Order" type="number" {...form.register("sortOrder", { valueAsNumber: true })} error={form.formState.errors.sortOrder?.message} />
      </div>
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? "Adding…" : "Add category"}
      </Button>
    </form>
  );
}

function TypeRow({ t, categories }: { t: DefectType; categories: Category[] }) {
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
        <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-expanded={editing} aria-label={`Edit ${t.code}`}>
          Edit
        </Button>
        <Button
          variant={t.active ? "ghost" : "secondary"}
          disabled={update.isPending}
          onClick={() => update.mutate({ code: t.code, changes: { active: !t.active } })}
          aria-label={`${t.active ? "Retire" : "Reactivate"} ${t.code}`}
        >
          {t.active ? "Retire" : "Reactivate"}
        </Button>
      </div>
      {editing ? (
        <div className="grid gap-3 rounded-md border border-ink-200 bg-ink-50 p-3 md:grid-cols-[1fr_1fr]">
          <TextField label={`Name of ${t.code}`} value={name} onChange={(e) => setName(e.target.value)} />
          <CategorySelect id={`cat-${t.code}`} label="Category" value={categoryCode} onChange={setCategoryCode} categories={categories} />
          <TextField label="Description" className="md:col-span-2" value={description} onChange={(e) => setDescription(e.target.value)} />
          <div className="flex gap-2 md:col-span-2">
            <Button onClick={() => void save()} disabled={update.isPending || !name.trim()}>
              Save
            </Button>
            <Button variant="ghost" onClick={() => setEditing(false)}>
              Cancel
            </Button>
          </div>
        </div>
      ) : null}
      {update.error ? <Notice tone="error">{message(update.error)}</Notice> : null}
    </li>
  );
}

function CategoryRow({ c, count }: { c: Category; count: number }) {
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
          <span className="block text-xs text-ink-600">
            {c.code} · {count} type{count === 1 ? "" : "s"}
          </span>
        </span>
        <ActiveMark active={c.active} />
        <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-label={`Rename ${c.code}`}>
          Rename
        </Button>
        <Button
          variant={c.active ? "ghost" : "secondary"}
          disabled={update.isPending}
          onClick={() => update.mutate({ code: c.code, changes: { active: !c.active } })}
          aria-label={`${c.active ? "Retire" : "Reactivate"} category ${c.code}`}
        >
          {c.active ? "Retire" : "Reactivate"}
        </Button>
      </div>
      {editing ? (
        <div className="grid gap-3 rounded-md border border-ink-200 bg-ink-50 p-3 md:grid-cols-[1fr_8rem_auto] md:items-end">
          <TextField label={`Name of ${c.code}`} value={name} onChange={(e) => setName(e.target.value)} />
          <TextField label="Order" type="number" value={order} onChange={(e) => setOrder(e.target.value)} />
          <Button onClick={() => void save()} disabled={update.isPending || !name.trim()}>
            Save
          </Button>
        </div>
      ) : null}
      {update.error ? <Notice tone="error">{message(update.error)}</Notice> : null}
    </li>
  );
}

/** The defect catalogue: categories and their types. Retired entries stay for the record and leave the yard's list. */
export function CatalogueEditor({ types, categories }: { types: DefectType[]; categories: Category[] }) {
  const sorted = [...categories].sort((a, b) => a.sortOrder - b.sortOrder || a.name.localeCompare(b.name));
  const [filter, setFilter] = useState("");
  const f = filter.trim().toLowerCase();
  const shown = types.filter((t) => !f || t.code.toLowerCase().includes(f) || t.name.toLowerCase().includes(f));
  return (
    <div className="grid gap-5 lg:grid-cols-[minmax(0,3fr)_minmax(20rem,2fr)]">
      <div className="space-y-5">
        <Card title={`Defect types (${types.filter((t) => t.active).length} in use, ${types.filter((t) => !t.active).length} retired)`}>
          <div className="space-y-4">
            <TextField label="Find a type" type="search" value={filter} onChange={(e) => setFilter(e.target.value)} />
            {sorted.map((c) => {
              const list = shown.filter((t) => t.categoryCode === c.code);
              if (list.length === 0) return null;
              return (
                <section key={c.code} aria-label={c.name}>
                  <h3 className="border-b-2 border-ink-200 pb-1 text-sm font-bold uppercase tracking-wide text-ink-700">{c.name}</h3>
                  <ul className="divide-y divide-ink-100">
                    {list.map((t) => (
                      <TypeRow key={t.code} t={t} categories={sorted} />
                    ))}
                  </ul>
                </section>
              );
            })}
          </div>
        </Card>
      </div>
      <div className="space-y-5">
        <Card title="Add a defect type">
          <NewTypeForm categories={sorted} />
        </Card>
        <Card title="Categories">
          <ul className="divide-y divide-ink-100">
            {sorted.map((c) => (
              <CategoryRow key={c.code} c={c} count={types.filter((t) => t.categoryCode === c.code).length} />
            ))}
          </ul>
        </Card>
        <Card title="Add a category">
          <NewCategoryForm nextOrder={Math.max(0, ...categories.map((c) => c.sortOrder)) + 1} />
        </Card>
      </div>
    </div>
  );
}
