import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { z } from "zod";
import { gradeFamilyInputSchema, gradeInputSchema } from "@shared/api/heats";
import type { PlantSetup } from "@shared/api/plant";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useFormMessage } from "@/features/users/components/form-messages";
import { friendlyErrors } from "@/lib/form-errors";
import { useCreateFamily, useCreateGrade, useUpdateFamily, useUpdateGrade } from "../api/setup.queries";
import { settled } from "@/components/mutation-form";

type Families = PlantSetup["gradeFamilies"];
type Family = Families[number];
type Grade = Family["grades"][number];

const selectClass = "min-h-11 rounded-md border border-ink-300 bg-white px-3 text-ink-900";

function ActiveMark({ active }: { active: boolean }) {
  const { t } = useTranslation("admin");
  return active ? (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ok-700">
      <span className="h-2.5 w-2.5 rounded-full bg-ok-700" aria-hidden /> {t("plant.grades.inUse")}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ink-600">
      <span className="h-2.5 w-2.5 border-2 border-ink-600" aria-hidden /> {t("plant.grades.retired")}
    </span>
  );
}

function GradeRow({ grade, family, families }: { grade: Grade; family: Family; families: Families }) {
  const { t } = useTranslation("admin");
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState(grade.name);
  const [familyCode, setFamilyCode] = useState(family.code);
  const update = useUpdateGrade();
  return (
    <tr className="border-b border-ink-100 align-middle" data-testid={`grade-${grade.code}`}>
      <td className="py-2 pr-3 font-semibold">{grade.code}</td>
      <td className="py-2 pr-3">
        {editing ? (
          <div className="flex flex-wrap gap-2">
            <input
              aria-label={t("plant.grades.nameOf", { code: grade.code })}
              value={name}
              onChange={(e) => setName(e.target.value)}
              className={`${selectClass} min-w-48 flex-1`}
            />
            <select
              aria-label={t("plant.grades.familyOf", { code: grade.code })}
              value={familyCode}
              onChange={(e) => setFamilyCode(e.target.value)}
              className={selectClass}
            >
              {families.map((f) => (
                <option key={f.code} value={f.code}>
                  {f.code} — {f.name}
                </option>
              ))}
            </select>
          </div>
        ) : (
          grade.name
        )}
        {update.isError ? <p className="mt-1 text-sm text-alarm-700">{update.error.message}</p> : null}
      </td>
      <td className="py-2 pr-3">
        <ActiveMark active={grade.active} />
      </td>
      <td className="py-2 text-right">
        <div className="flex justify-end gap-2">
          {editing ? (
            <>
              <Button
                disabled={update.isPending || !name.trim()}
                onClick={() => update.mutate({ code: grade.code, name: name.trim(), familyCode }, { onSuccess: () => setEditing(false) })}
              >
                {t("plant.grades.save")}
              </Button>
              <Button
                variant="ghost"
                onClick={() => {
                  setName(grade.name);
                  setFamilyCode(family.code);
                  setEditing(false);
                }}
              >
                {t("plant.grades.cancel")}
              </Button>
            </>
          ) : (
            <>
              <Button variant="secondary" onClick={() => setEditing(true)}>
                {t("plant.grades.rename")}
              </Button>
              <Button variant="secondary" disabled={update.isPending} onClick={() => update.mutate({ code: grade.code, active: !grade.active })}>
                {grade.active ? t("plant.grades.retire") : t("plant.grades.bringBack")}
              </Button>
            </>
          )}
        </div>
      </td>
    </tr>
  );
}

function FamilyHeader({ family }: { family: Family }) {
  const { t } = useTranslation("admin");
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState(family.name);
  const [description, setDescription] = useState(family.description ?? "");
  const update = useUpdateFamily();
  if (!editing) {
    return (
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div>
          <h3 className="font-semibold">
            {family.code} — {family.name}
          </h3>
          {family.description ? <p className="text-xs text-ink-600">{family.description}</p> : null}
        </div>
        <Button variant="ghost" onClick={() => setEditing(true)}>
          {t("plant.grades.renameFamily")}
        </Button>
      </div>
    );
  }
  return (
    <div className="space-y-2 rounded-md border border-ink-200 bg-ink-50 p-3">
      <div className="grid gap-2 md:grid-cols-2">
        <TextField label={t("plant.grades.nameOfFamily", { code: family.code })} value={name} onChange={(e) => setName(e.target.value)} />
        <TextField label={t("plant.grades.description")} value={description} onChange={(e) => setDescription(e.target.value)} />
      </div>
      {update.isError ? <Notice tone="error">{update.error.message}</Notice> : null}
      <div className="flex gap-2">
        <Button
          disabled={update.isPending || !name.trim()}
          onClick={() =>
            update.mutate({ code: family.code, name: name.trim(), description: description.trim() || null }, { onSuccess: () => setEditing(false) })
          }
        >
          {t("plant.grades.saveFamily")}
        </Button>
        <Button variant="ghost" onClick={() => setEditing(false)}>
          {t("plant.grades.cancel")}
        </Button>
      </div>
    </div>
  );
}

function NewFamilyForm() {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const create = useCreateFamily();
  const form = useForm<z.input<typeof gradeFamilyInputSchema>>({
    resolver: zodResolver(gradeFamilyInputSchema, friendlyErrors),
    defaultValues: { code: "", name: "", description: null },
  });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label={t("plant.grades.newFamily")}
      className="space-y-3"
      onSubmit={form.handleSubmit(async (v) => {
        if (await settled(create.mutateAsync({ ...v, description: v.description || null }))) form.reset();
      })}
    >
      <div className="grid gap-3 md:grid-cols-[10rem_1fr_1fr]">
        <TextField label={t("plant.grades.code")} {...form.register("code")} error={message(e.code?.message)} />
        <TextField label={t("plant.grades.name")} {...form.register("name")} error={message(e.name?.message)} />
        <TextField label={t("plant.grades.description")} {...form.register("description")} error={message(e.description?.message)} />
      </div>
      {create.isError ? <Notice tone="error">{create.error.message}</Notice> : null}
      <Button type="submit" variant="secondary" disabled={form.formState.isSubmitting}>
        {t("plant.grades.addFamily")}
      </Button>
    </form>
  );
}

function NewGradeForm({ families }: { families: Families }) {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const create = useCreateGrade();
  const form = useForm<z.input<typeof gradeInputSchema>>({
    resolver: zodResolver(gradeInputSchema, friendlyErrors),
    defaultValues: { code: "", name: "", familyCode: families[0]?.code ?? "", active: true },
  });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label={t("plant.grades.newGrade")}
      className="space-y-3"
      onSubmit={form.handleSubmit(async (v) => {
        if (await settled(create.mutateAsync(v))) form.reset({ code: "", name: "", familyCode: v.familyCode, active: true });
      })}
    >
      <div className="grid gap-3 md:grid-cols-[10rem_1fr_18rem]">
        <TextField label={t("plant.grades.code")} {...form.register("code")} error={message(e.code?.message)} />
        <TextField label={t("plant.grades.name")} {...form.register("name")} error={message(e.name?.message)} />
        <label className="flex flex-col gap-1">
          <span className="text-sm font-semibold text-ink-800">{t("plant.grades.family")}</span>
          <select {...form.register("familyCode")} className={selectClass}>
            {families.map((f) => (
              <option key={f.code} value={f.code}>
                {f.code} — {f.name}
              </option>
            ))}
          </select>
        </label>
      </div>
      {create.isError ? <Notice tone="error">{create.error.message}</Notice> : null}
      <Button type="submit" variant="secondary" disabled={form.formState.isSubmitting}>
        {t("plant.grades.addGrade")}
      </Button>
    </form>
  );
}

/** Grade families and their grades: add, rename, move to another family, retire (kept for the history). */
export function GradesEditor({ families }: { families: Families }) {
  const { t } = useTranslation("admin");
  return (
    <div className="space-y-6">
      {families.map((f) => (
        <section key={f.code} className="space-y-2" aria-label={t("plant.grades.familySection", { code: f.code })}>
          <FamilyHeader family={f} />
          {f.grades.length ? (
            <div className="overflow-x-auto">
              <table className="w-full table-fixed text-sm">
                <colgroup>
                  <col className="w-28" />
                  <col />
                  <col className="w-28" />
                  <col className="w-56" />
                </colgroup>
                <tbody>
                  {f.grades.map((g) => (
                    <GradeRow key={g.code} grade={g} family={f} families={families} />
                  ))}
                </tbody>
              </table>
            </div>
          ) : (
            <p className="text-sm text-ink-600">{t("plant.grades.noGrades")}</p>
          )}
        </section>
      ))}
      <div className="grid gap-5 border-t border-ink-200 pt-4">
        <div>
          <h3 className="mb-2 font-semibold">{t("plant.grades.addAGrade")}</h3>
          <NewGradeForm families={families} />
        </div>
        <div>
          <h3 className="mb-2 font-semibold">{t("plant.grades.addAFamily")}</h3>
          <NewFamilyForm />
        </div>
      </div>
      <p className="text-xs text-ink-600">{t("plant.grades.retireNote")}</p>
    </div>
  );
}
