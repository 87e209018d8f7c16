import { useState, type ReactNode } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { Defect, DefectType } from "@shared/api/defects";
import { DISPOSITIONS, SEVERITIES, STAGES } from "@shared/domain";
import { Button } from "@/components/ui/button";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { useTerms } from "@/i18n/terms";
import { ApiError } from "@/lib/api-client";
import { newClientKey } from "@/lib/client-key";
import { inputNumberText, parseDecimal } from "@/lib/format";
import { useDeletePhoto, useUpdateDefect } from "../api/defects.queries";
import { getOutbox } from "../offline/outbox-instance";
import type { OutboxEntryView, OutboxSummary } from "../offline/outbox";
import { ChoiceTiles } from "./choice-tiles";
import { buildDefect, changesOf, draftFromBody, draftFromDefect, emptyDraft, type DraftErrors, type DraftField, type EntryDraft } from "./defect-entry";
import { PhotoPicker, type LocalPhoto } from "./photo-picker";
import { PositionPanel, type PositionValue, type SlabLimits } from "./position-panel";
import { TypePicker } from "./type-picker";

export type FormMode = { kind: "new" } | { kind: "fix"; entry: OutboxEntryView } | { kind: "edit"; defect: Defect };

export interface DrawingSlot {
  position: PositionValue | null;
  onPlace: (p: PositionValue) => void;
  extent: { lengthMm: number | null; widthMm: number | null };
}

const ORDER: DraftField[] = ["position", "typeCode", "severity", "lengthMm", "widthMm", "depthMm", "stage", "disposition", "note"];
const SECTION_OF: Partial<Record<DraftField, string>> = {
  position: "entry-where",
  typeCode: "entry-type",
  severity: "entry-severity",
  lengthMm: "entry-size",
  widthMm: "entry-size",
  depthMm: "entry-size",
  disposition: "entry-disposition",
};
/** What the bar says is still missing, by its key under entry.missing. */
const MISSING_WORDS: Partial<Record<DraftField, string>> = {
  position: "where",
  typeCode: "type",
  severity: "severity",
  disposition: "disposition",
};

function Section({ id, step, title, children, aside }: { id: string; step: number; title: string; children: ReactNode; aside?: ReactNode }) {
  return (
    <section id={id} className="scroll-mt-4 rounded-lg border border-ink-200 bg-white shadow-sm" aria-labelledby={`${id}-title`}>
      <header className="flex flex-wrap items-center justify-between gap-2 border-b border-ink-100 px-4 py-3">
        <h2 id={`${id}-title`} className="flex items-center gap-3 text-lg font-bold text-ink-900">
          <span aria-hidden className="flex h-8 w-8 items-center justify-center rounded-full bg-ink-900 text-base text-white">
            {step}
          </span>
          {title}
        </h2>
        {aside}
      </header>
      <div className="space-y-4 p-4">{children}</div>
    </section>
  );
}

function SizeField({
  name,
  label,
  value,
  onChange,
  error,
  hint,
}: {
  /** The field's id, the same in every language: size-length, size-width, size-depth. */
  name: string;
  label: string;
  value: string;
  onChange: (v: string) => void;
  error?: string;
  hint?: string;
}) {
  const id = `size-${name}`;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <div className="relative">
        <input
          id={id}
          inputMode="decimal"
          value={value}
          onChange={(e) => onChange(e.target.value)}
          aria-invalid={error ? true : undefined}
          className={`min-h-14 w-full rounded-lg border-2 bg-white pl-3 pr-12 text-right text-xl font-semibold tabular-nums ${error ? "border-alarm-700" : "border-ink-300"}`}
        />
        <span className="pointer-events-none absolute inset-y-0 right-3 flex items-center text-sm text-ink-600">mm</span>
      </div>
      {error ? (
        <p role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : hint ? (
        <p className="text-xs text-ink-600">{hint}</p>
      ) : null}
    </div>
  );
}

function initialDraft(mode: FormMode): EntryDraft {
  if (mode.kind === "fix" && mode.entry.body) return sizesInLanguage(draftFromBody(mode.entry.body));
  if (mode.kind === "edit") return sizesInLanguage(draftFromDefect(mode.defect));
  return emptyDraft();
}

/** A stored size shows as the language writes it ("2,5" in German); parseSize reads both styles. */
function sizesInLanguage(d: EntryDraft): EntryDraft {
  return { ...d, lengthMm: inputNumberText(d.lengthMm), widthMm: inputNumberText(d.widthMm), depthMm: inputNumberText(d.depthMm) };
}

/**
 * One defect: where (the drawing), what (type, severity, size), what happens (stage, disposition),
 * a note and photos. A new entry is stored on the tablet first and sent from there; an entry the
 * server refused is fixed here and sent again; an entry on the server is changed in place.
 */
export function DefectForm({
  slab,
  types,
  userId,
  mode,
  renderDrawing,
  onSaved,
  onCancel,
  rolled,
}: {
  slab: SlabLimits & { slabId: string };
  types: DefectType[];
  userId: string;
  mode: FormMode;
  renderDrawing: (slot: DrawingSlot) => ReactNode;
  onSaved: (what: { kind: FormMode["kind"]; summary: OutboxSummary; photoCount: number }) => void;
  onCancel?: () => void;
  /**
   * Set when the slab has already been rolled, in words ("This slab was rolled on … into coil …."):
   * a "found in the slab yard" entry is then asked about before it is kept.
   */
  rolled?: string | null;
}) {
  const { t } = useTranslation("yard");
  const { term } = useTerms();
  const [draft, setDraft] = useState<EntryDraft>(() => initialDraft(mode));
  const [photos, setPhotos] = useState<LocalPhoto[]>([]);
  const [errors, setErrors] = useState<DraftErrors>({});
  const [failure, setFailure] = useState<string | null>(null);
  const [saving, setSaving] = useState(false);
  const [confirmPhoto, setConfirmPhoto] = useState<string | null>(null);
  const [askRolled, setAskRolled] = useState(false);
  const update = useUpdateDefect();
  const deletePhoto = useDeletePhoto();

  const set = <K extends keyof EntryDraft>(k: K, v: EntryDraft[K]) => {
    setDraft((d) => ({ ...d, [k]: v }));
    if (k === "stage") setAskRolled(false);
    setErrors((e) => {
      if (!(k in e) && !(k === "position" && e.position)) return e;
      const { [k as DraftField]: _gone, ...rest } = e;
      return rest;
    });
  };

  const size = (s: string) => {
    const n = parseDecimal(s);
    return s.trim() && Number.isFinite(n) ? n : null;
  };
  const extent = { lengthMm: size(draft.lengthMm), widthMm: size(draft.widthMm) };
  const existingPhotos = mode.kind === "edit" ? mode.defect.photos : [];
  const missing = (["position", "typeCode", "severity", "disposition"] as DraftField[]).filter((f) =>
    f === "position" ? !draft.position : !draft[f as keyof EntryDraft],
  );

  const save = async (rolledConfirmed = false) => {
    setFailure(null);
    const clientKey = mode.kind === "fix" ? mode.entry.clientKey : mode.kind === "new" ? newClientKey() : (mode.defect.clientKey ?? newClientKey());
    const foundAt = mode.kind === "fix" && mode.entry.body?.found_at ? mode.entry.body.found_at : new Date().toISOString();
    const built = buildDefect(draft, slab, clientKey, foundAt);
    if (!built.ok) {
      setErrors(built.errors);
      const first = ORDER.find((f) => built.errors[f]);
      const target = first ? SECTION_OF[first] : undefined;
      if (target) document.getElementById(target)?.scrollIntoView({ behavior: "smooth", block: "start" });
      return;
    }
    const body = built.body;
    // A rolled slab is no longer in the yard: ask before keeping a slab-yard finding on it.
    if (rolled && body.stage === "slab_yard" && !rolledConfirmed && (mode.kind !== "edit" || mode.defect.stage !== "slab_yard")) {
      setAskRolled(true);
      return;
    }
    setAskRolled(false);
    const type = types.find((t) => t.code === body.type_code);
    const summary: OutboxSummary = {
      typeCode: body.type_code,
      typeName: type?.name ?? (mode.kind === "edit" ? mode.defect.typeName : body.type_code),
      severity: body.severity,
      face: body.face,
      alongMm: body.position_along_mm,
      acrossMm: body.position_across_mm,
    };
    const outboxPhotos = photos.map((p) => ({ key: p.key, name: p.file.name || "photo.jpg", type: p.file.type || "image/jpeg", blob: p.file as Blob }));
    setSaving(true);
    try {
      const outbox = getOutbox();
      if (mode.kind === "new") {
        await outbox.add({ clientKey, userId, slabId: slab.slabId, body, summary, photos: outboxPhotos });
      } else if (mode.kind === "fix") {
        await outbox.update(clientKey, body, summary);
      } else {
        const changes = changesOf(mode.defect, body);
        if (changes) await update.mutateAsync({ id: mode.defect.id, changes });
        // Photos added to an entry already on the server still go through the tablet's outbox.
        if (outboxPhotos.length)
          await outbox.add({ clientKey: newClientKey(), userId, slabId: slab.slabId, body: null, defectId: mode.defect.id, summary, photos: outboxPhotos });
      }
      onSaved({ kind: mode.kind, summary, photoCount: photos.length });
      if (mode.kind === "new") {
        // Ready for the next defect on the same slab; the stage rarely changes between them.
        setDraft(emptyDraft(draft.stage));
        setPhotos([]);
        setErrors({});
        // The screen scrolls to its word that the entry was saved, just above the emptied form.
      }
    } catch (err) {
      setFailure(err instanceof Error ? err.message : String(err));
    } finally {
      setSaving(false);
    }
  };

  const removeServerPhoto = async (photoId: string) => {
    try {
      await deletePhoto.mutateAsync(photoId);
      setConfirmPhoto(null);
    } catch (err) {
      setFailure(err instanceof ApiError ? err.message : String(err));
    }
  };

  const saveLabel =
    mode.kind === "new"
      ? saving
        ? t("entry.saving")
        : t("entry.saveNew")
      : mode.kind === "fix"
        ? saving
          ? t("entry.saving")
          : t("entry.saveFix")
        : saving
          ? t("entry.saving")
          : t("entry.saveEdit");

  return (
    <div className="space-y-4">
      {mode.kind === "fix" && mode.entry.blocked ? (
        <Notice tone="error" title={t("entry.refused")}>
          {t("entry.refusedText", { message: mode.entry.blocked.message })}
        </Notice>
      ) : null}
      <Section id="entry-where" step={1} title={t("entry.where")}>
        {renderDrawing({ position: draft.position, onPlace: (p) => set("position", p), extent })}
        <PositionPanel slab={slab} value={draft.position} onChange={(p) => set("position", p)} error={errors.position} />
      </Section>

      <Section id="entry-type" step={2} title={t("entry.what")}>
        <TypePicker types={types} value={draft.typeCode} onChange={(c) => set("typeCode", c)} error={errors.typeCode} />
        <ChoiceTiles
          id="entry-severity"
          label={t("entry.severity")}
          columns="grid-cols-2 md:grid-cols-4"
          value={draft.severity}
          onChange={(s) => set("severity", s)}
          error={errors.severity}
          choices={SEVERITIES.map((s) => ({
            value: s,
            name: t("entry.severityName", { label: term("severities", s), severity: s }),
            label: <SeverityMark severity={s} large />,
          }))}
        />
        <div id="entry-size" className="grid scroll-mt-24 grid-cols-3 gap-3">
          <SizeField
            name="length"
            label={t("entry.length")}
            value={draft.lengthMm}
            onChange={(v) => set("lengthMm", v)}
            error={errors.lengthMm}
            hint={t("entry.lengthHint")}
          />
          <SizeField
            name="width"
            label={t("entry.width")}
            value={draft.widthMm}
            onChange={(v) => set("widthMm", v)}
            error={errors.widthMm}
            hint={t("entry.widthHint")}
          />
          <SizeField
            name="depth"
            label={t("entry.depth")}
            value={draft.depthMm}
            onChange={(v) => set("depthMm", v)}
            error={errors.depthMm}
            hint={t("entry.depthHint")}
          />
        </div>
        <p className="-mt-2 text-xs text-ink-600">{t("entry.positionNote")}</p>
      </Section>

      <Section id="entry-disposition" step={3} title={t("entry.whatHappens")}>
        <ChoiceTiles
          label={t("entry.foundAt")}
          columns="grid-cols-2 md:grid-cols-5"
          value={draft.stage}
          onChange={(s) => set("stage", s)}
          choices={STAGES.map((s) => ({ value: s, label: term("stages", s) }))}
        />
        <ChoiceTiles
          label={t("entry.disposition")}
          columns="grid-cols-2 md:grid-cols-3"
          value={draft.disposition}
          onChange={(d) => set("disposition", d)}
          error={errors.disposition}
          choices={DISPOSITIONS.map((d) => ({ value: d, label: term("dispositions", d) }))}
        />
        <p className="text-xs text-ink-600">{t("entry.dispositionNote")}</p>
        <div className="flex flex-col gap-1">
          <label htmlFor="entry-note" className="text-base font-semibold text-ink-900">
            <Trans t={t} i18nKey="entry.note" components={{ 1: <span className="font-normal text-ink-600" /> }} />
          </label>
          <textarea
            id="entry-note"
            rows={2}
            value={draft.note}
            maxLength={2000}
            onChange={(e) => set("note", e.target.value)}
            className="rounded-lg border-2 border-ink-300 bg-white px-3 py-2 text-base"
          />
          {errors.note ? (
            <p role="alert" className="text-sm font-medium text-alarm-700">
              {errors.note}
            </p>
          ) : null}
        </div>
      </Section>

      <Section id="entry-photos" step={4} title={t("entry.photos")}>
        {existingPhotos.length ? (
          <ul className="flex flex-wrap gap-3" aria-label={t("entry.photosOnServer")}>
            {existingPhotos.map((p, i) => (
              <li key={p.id} className="flex flex-col items-center gap-1">
                <img src={p.thumbUrl} alt={t("entry.storedPhoto", { n: i + 1 })} className="h-24 w-24 rounded-md border border-ink-300 object-cover" />
                {confirmPhoto === p.id ? (
                  <div className="flex gap-1">
                    <Button variant="danger" className="min-h-12" onClick={() => void removeServerPhoto(p.id)} disabled={deletePhoto.isPending}>
                      {t("entry.delete")}
                    </Button>
                    <Button variant="ghost" className="min-h-12" onClick={() => setConfirmPhoto(null)}>
                      {t("entry.keep")}
                    </Button>
                  </div>
                ) : (
                  <button type="button" className="min-h-12 px-3 text-sm font-semibold text-alarm-700 underline" onClick={() => setConfirmPhoto(p.id)}>
                    {t("entry.deleteAsk")}
                  </button>
                )}
              </li>
            ))}
          </ul>
        ) : null}
        {mode.kind === "fix" ? (
          <p className="text-sm text-ink-700">{t("entry.fixPhotos", { count: mode.entry.photos.length, n: mode.entry.photos.length })}</p>
        ) : (
          <PhotoPicker photos={photos} onChange={setPhotos} already={existingPhotos.length} />
        )}
      </Section>

      {failure ? <Notice tone="error">{failure}</Notice> : null}

      {/* Always in reach: what is still needed, and the one button that keeps the entry. */}
      {/* Sticky, not fixed: it docks at the end of the form, so nothing below it is ever covered. */}
      <div className="sticky bottom-0 z-20 -mx-4 border-t-2 border-ink-900 bg-white px-4 py-3 shadow-[0_-4px_16px_rgba(0,0,0,0.12)] md:mx-0 md:rounded-t-lg">
        {askRolled && rolled ? (
          <div
            className="mb-3 space-y-3 rounded-md border-l-4 border-ember-600 bg-ember-50 px-4 py-3"
            role="alertdialog"
            aria-labelledby="rolled-question"
            data-testid="rolled-question"
          >
            <p id="rolled-question" className="text-base text-ink-900">
              <Trans t={t} i18nKey="entry.rolledQuestion" values={{ rolled }} components={{ 1: <b /> }} />
            </p>
            <div className="flex flex-wrap gap-2">
              <Button size="lg" onClick={() => void save(true)} disabled={saving}>
                {t("entry.rolledYes")}
              </Button>
              <Button
                variant="secondary"
                size="lg"
                onClick={() => {
                  setAskRolled(false);
                  document.getElementById("entry-disposition")?.scrollIntoView({ behavior: "smooth", block: "start" });
                }}
              >
                {t("entry.rolledNo")}
              </Button>
            </div>
          </div>
        ) : null}
        <div className="flex flex-wrap items-center justify-between gap-3">
          <p className="text-sm text-ink-700" aria-live="polite" data-testid="save-needs">
            {missing.length ? (
              <Trans
                t={t}
                i18nKey="entry.stillNeeded"
                values={{ list: missing.map((f) => t(`entry.missing.${MISSING_WORDS[f]}`)).join(", ") }}
                components={{ 1: <span className="font-semibold text-ink-900" /> }}
              />
            ) : mode.kind === "new" ? (
              t("entry.readyNew")
            ) : (
              t("entry.ready")
            )}
          </p>
          <div className="flex gap-2">
            {onCancel ? (
              <Button variant="secondary" size="lg" onClick={onCancel}>
                {t("entry.cancel")}
              </Button>
            ) : null}
            <Button size="lg" onClick={() => void save()} disabled={saving} className="min-w-48">
              {saveLabel}
            </Button>
          </div>
        </div>
      </div>
    </div>
  );
}
