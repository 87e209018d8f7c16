import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { z } from "zod";
import { CAUSE_GROUP_CODES, causeTagCreateSchema, type CauseTag, type CauseTaxonomy } from "@shared/api/causes";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { ActiveMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { plural } from "@/lib/format";
import { useCreateCauseTag, useDeleteCauseTag, useUpdateCauseTag } from "../api/causes.queries";

type CreateInput = z.input<typeof causeTagCreateSchema>;
const selectClass = "min-h-11 w-full rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";

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
  const create = useCreateCauseTag();
  const form = useForm<CreateInput>({ resolver: zodResolver(causeTagCreateSchema), defaultValues: { code: "", name: "", group: "process", description: "" } });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label="New cause tag"
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
        <TextField label="Code" hint="lower-case, with hyphens: nozzle-erosion" autoComplete="off" {...form.register("code")} error={e.code?.message} />
        <TextField label="Name" {...form.register("name")} error={e.name?.message} />
        <GroupSelect
          taxonomy={taxonomy}
          id="new-tag-group"
          label="Group"
          value={form.watch("group")}
          onChange={(v) => form.setValue("group", v as CreateInput["group"])}
        />
      </div>
      <TextField label="Description (optional)" {...form.register("description")} error={e.description?.message} />
      <div className="flex gap-2">
        <Button type="submit" disabled={create.isPending}>
          {create.isPending ? "Adding…" : "Add the tag"}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

function EditTag({ tag, taxonomy, onDone }: { tag: CauseTag; taxonomy: CauseTaxonomy; onDone: () => void }) {
  const update = useUpdateCauseTag();
  const [name, setName] = useState(tag.name);
  const [group, setGroup] = useState(tag.group);
  const [description, setDescription] = useState(tag.description ?? "");
  return (
    <form
      aria-label={`Change ${tag.code}`}
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
        <TextField label="Name" value={name} onChange={(e) => setName(e.target.value)} maxLength={80} />
        <GroupSelect taxonomy={taxonomy} id={`group-${tag.code}`} label="Group" value={group} onChange={setGroup} />
      </div>
      <TextField label="Description" value={description} onChange={(e) => setDescription(e.target.value)} maxLength={500} />
      {update.isError ? <Notice tone="error">{update.error.message}</Notice> : null}
      <div className="flex gap-2">
        <Button type="submit" disabled={update.isPending}>
          {update.isPending ? "Saving…" : "Save"}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

function TagRow({ tag, taxonomy, canEdit }: { tag: CauseTag; taxonomy: CauseTaxonomy; canEdit: boolean }) {
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
          {plural(tag.uses, "live tagging")}
          {tag.uses === 0 && tag.everUsed ? <div className="text-xs text-ink-600">used before</div> : null}
        </div>
        <div className="w-24">
          <ActiveMark active={!tag.retired} />
        </div>
      </div>
      {canEdit ? (
        <div className="flex flex-wrap gap-2">
          <Button variant="secondary" onClick={() => setEditing((v) => !v)} aria-label={`Change ${tag.name}`}>
            Change
          </Button>
          <Button
            variant="secondary"
            disabled={update.isPending}
            onClick={() => update.mutate({ code: tag.code, changes: { retired: !tag.retired } })}
            aria-label={`${tag.retired ? "Reinstate" : "Retire"} ${tag.name}`}
          >
            {tag.retired ? "Reinstate" : "Retire"}
          </Button>
          {!tag.everUsed ? (
            confirmDelete ? (
              <>
                <Button variant="danger" disabled={del.isPending} onClick={() => del.mutate(tag.code)}>
                  {del.isPending ? "Deleting…" : "Delete for good"}
                </Button>
                <Button variant="ghost" onClick={() => setConfirmDelete(false)}>
                  Keep
                </Button>
              </>
            ) : (
              <Button variant="ghost" onClick={() => setConfirmDelete(true)} aria-label={`Delete ${tag.name}`}>
                Delete…
              </Button>
            )
          ) : (
            <span className="self-center text-xs text-ink-600">used, so it can be retired but not deleted</span>
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
  return (
    <div className="grid gap-5 xl:grid-cols-2">
      {taxonomy.groups.map((g) => (
        <Card key={g.code} title={`${g.name} (${g.tags.length})`}>
          <div data-testid="cause-group" data-group={g.code}>
            {g.tags.length === 0 ? (
              <p className="text-sm text-ink-600">No tags in this group yet.</p>
            ) : (
              <ul className="divide-y divide-ink-100">
                {g.tags.map((t) => (
                  <TagRow key={t.code} tag={t} taxonomy={taxonomy} canEdit={canEdit} />
                ))}
              </ul>
            )}
          </div>
        </Card>
      ))}
    </div>
  );
}
