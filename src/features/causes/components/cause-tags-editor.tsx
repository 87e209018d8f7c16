import { useState } from "react";
import { useForm } from "react-hook-form";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { zodResolver } from "@/lib/form-resolver";
import type { z } from "zod";
import { CAUSE_GROUP_CODES, causeTagCreateSchema, type CauseTag, type CauseTaxonomy } from "@shared/api/causes";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { ActiveMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { count } from "@/lib/format";
import { useCreateCauseTag, useDeleteCauseTag, useUpdateCauseTag } from "../api/causes.queries";

type CreateInput = z.input<typeof causeTagCreateSchema>;
const selectClass = "min-h-11 w-full rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";

/** The shared schema's messages (English) in the language shown; another message shows as it comes. */
const SCHEMA_MESSAGES: Record<string, string> = {
  "Give the tag a name.": "causes.editor.errors.name",
  "The group is process, equipment, material, handling or measurement.": "causes.editor.errors.group",
  "The code needs at least 2 characters.": "causes.editor.errors.codeShort",
  "The code uses lower-case letters, digits and single hyphens (e.g. sen-clogging).": "causes.editor.errors.codeForm",
};
const schemaMessage = (t: TFunction, m: string | undefined) => (m && SCHEMA_MESSAGES[m] ? t(SCHEMA_MESSAGES[m]) : m);

const groupName = (taxonomy: CauseTaxonomy, code: string) => taxonomy.groups.find((g) => g.code === code)?.name ?? code;

function GroupSelect({
  taxonomy,
  value,
  onChange,
  label,
  id,
}: {
  taxonomy: CauseTaxonomy;
  value: string;
  onChange: (v: string) => void;
  label: string;
  id: string;
}) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <select id={id} value={value} onChange={(e) => onChange(e.target.value)} className={selectClass}>
        {CAUSE_GROUP_CODES.map((g) => (
          <option key={g} value={g}>
            {groupName(taxonomy, g)}
          </option>
        ))}
      </select>
    </div>
  );
}

export function NewCauseTagForm({ taxonomy, onDone }: { taxonomy: CauseTaxonomy; onDone: () => void }) {
  const { t } = useTranslation("process");
  const create = useCreateCauseTag();
  const form = useForm<CreateInput>({ resolver: zodResolver(causeTagCreateSchema), defaultValues: { code: "", name: "", group: "process", description: "" } });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label={t("causesPage.newTag")}
      className="space-y-4"
      onSubmit={form.handleSubmit((v) =>
        create.mutate(
          { ...v, description: v.description?.trim() ? v.description.trim() : null },
          {
            onSuccess: () => {
              form.reset();
              onDone();
            },
          },
        ),
      )}
    >
      {create.isError ? <Notice tone="error">{create.error.message}</Notice> : null}
      <div className="grid gap-4 md:grid-cols-3">
        <TextField
          label={t("causes.editor.code")}
          hint={t("causes.editor.codeHint")}
          autoComplete="off"
          {...form.register("code")}
          error={schemaMessage(t, e.code?.message)}
        />
        <TextField label={t("causes.editor.name")} {...form.register("name")} error={schemaMessage(t, e.name?.message)} />
        <GroupSelect
          taxonomy={taxonomy}
          id="new-tag-group"
          label={t("causes.editor.group")}
          value={form.watch("group")}
          onChange={(v) => form.setValue("group", v as CreateInput["group"])}
        />
      </div>
      <TextField label={t("causes.editor.descriptionOptional")} {...form.register("description")} error={schemaMessage(t, e.description?.message)} />
      <div className="flex gap-2">
        <Button type="submit" disabled={create.isPending}>
          {create.isPending ? t("ui.adding") : t("causes.editor.addTag")}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          {t("ui.cancel")}
        </Button>
      </div>
    </form>
  );
}

function EditTag({ tag, taxonomy, onDone }: { tag: CauseTag; taxonomy: CauseTaxonomy; onDone: () => void }) {
  const { t } = useTranslation("process");
  const update = useUpdateCauseTag();
  const [name, setName] = useState(tag.name);
  const [group, setGroup] = useState(tag.group);
  const [description, setDescription] = useState(tag.description ?? "");
  return (
    <form
      aria-label={t("causes.editor.changeLabel", { name: tag.code })}
      className="space-y-3 rounded-md border border-ink-200 bg-ink-50 p-3"
      onSubmit={(ev) => {
        ev.preventDefault();
        const changes: { name?: string; group?: string; description?: string | null } = {};
        if (name.trim() !== tag.name) changes.name = name.trim();
        if (group !== tag.group) changes.group = group;
        if ((description.trim() || null) !== tag.description) changes.description = description.trim() || null;
        if (Object.keys(changes).length === 0) return onDone();
        update.mutate({ code: tag.code, changes }, { onSuccess: onDone });
      }}
    >
      <div className="grid gap-3 md:grid-cols-2">
        <TextField label={t("causes.editor.name")} value={name} onChange={(e) => setName(e.target.value)} maxLength={80} />
        <GroupSelect taxonomy={taxonomy} id={`group-${tag.code}`} label={t("causes.editor.group")} value={group} onChange={setGroup} />
      </div>
      <TextField label={t("causes.editor.description")} value={description} onChange={(e) => setDescription(e.target.value)} maxLength={500} />
      {update.isError ? <Notice tone="error">{update.error.message}</Notice> : null}
      <div className="flex gap-2">
        <Button type="submit" disabled={update.isPending}>
          {update.isPending ? t("ui.saving") : t("ui.save")}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          {t("ui.cancel")}
        </Button>
      </div>
    </form>
  );
}

function TagRow({ tag, taxonomy, canEdit }: { tag: CauseTag; taxonomy: CauseTaxonomy; canEdit: boolean }) {
  const { t } = useTranslation("process");
  const [editing, setEditing] = useState(false);
  const [confirmDelete, setConfirmDelete] = useState(false);
  const update = useUpdateCauseTag();
  const del = useDeleteCauseTag();
  return (
    <li className={`space-y-2 py-3 ${tag.retired ? "text-ink-600" : ""}`} data-testid="cause-tag-row" data-code={tag.code}>
      <div className="flex flex-wrap items-start gap-x-4 gap-y-2">
        <div className="min-w-48 flex-1">
          <div className="font-semibold text-ink-900" data-field="name">
            {tag.name}
          </div>
          <div className="text-xs text-ink-600">
            <span data-field="code">{tag.code}</span>
            {tag.description ? <> · {tag.description}</> : null}
          </div>
        </div>
        <div className="w-36 text-sm tabular-nums" data-field="uses">
          {t("causes.editor.uses", { count: tag.uses, n: count(tag.uses) })}
          {tag.uses === 0 && tag.everUsed ? <div className="text-xs text-ink-600">{t("causes.editor.usedBefore")}</div> : null}
        </div>
        <div className="w-24">
          <ActiveMark active={!tag.retired} />
        </div>
      </div>
      {canEdit ? (
        <div className="flex flex-wrap gap-2">
          <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-label={t("causes.editor.changeLabel", { name: tag.name })}>
            {t("ui.change")}
          </Button>
          <Button
            variant="secondary"
            disabled={update.isPending}
            onClick={() => update.mutate({ code: tag.code, changes: { retired: !tag.retired } })}
            aria-label={tag.retired ? t("causes.editor.reinstateLabel", { name: tag.name }) : t("causes.editor.retireLabel", { name: tag.name })}
          >
            {tag.retired ? t("causes.editor.reinstate") : t("causes.editor.retire")}
          </Button>
          {!tag.everUsed ? (
            confirmDelete ? (
              <>
                <Button variant="danger" disabled={del.isPending} onClick={() => del.mutate(tag.code)}>
                  {del.isPending ? t("causes.editor.deleting") : t("causes.editor.deleteForGood")}
                </Button>
                <Button variant="ghost" onClick={() => setConfirmDelete(false)}>
                  {t("causes.editor.keep")}
                </Button>
              </>
            ) : (
              <Button variant="ghost" onClick={() => setConfirmDelete(true)} aria-label={t("causes.editor.deleteLabel", { name: tag.name })}>
                {t("causes.editor.delete")}
              </Button>
            )
          ) : (
            <span className="self-center text-xs text-ink-600">{t("causes.editor.cannotDelete")}</span>
          )}
        </div>
      ) : null}
      {update.isError ? <Notice tone="error">{update.error.message}</Notice> : null}
      {del.isError ? <Notice tone="error">{del.error.message}</Notice> : null}
      {editing ? <EditTag tag={tag} taxonomy={taxonomy} onDone={() => setEditing(false)} /> : null}
    </li>
  );
}

/** The cause taxonomy by group; a tag once used is only ever retired, so its old taggings keep their name. */
export function CauseTagsEditor({ taxonomy, canEdit }: { taxonomy: CauseTaxonomy; canEdit: boolean }) {
  const { t } = useTranslation("process");
  return (
    <div className="grid gap-5 xl:grid-cols-2">
      {taxonomy.groups.map((g) => (
        <Card key={g.code} title={t("causes.editor.groupTitle", { name: g.name, n: count(g.tags.length) })}>
          <div data-testid="cause-group" data-group={g.code}>
            {g.tags.length === 0 ? (
              <p className="text-sm text-ink-600">{t("causes.editor.emptyGroup")}</p>
            ) : (
              <ul className="divide-y divide-ink-100">
                {g.tags.map((tag) => (
                  <TagRow key={tag.code} tag={tag} taxonomy={taxonomy} canEdit={canEdit} />
                ))}
              </ul>
            )}
          </div>
        </Card>
      ))}
    </div>
  );
}
