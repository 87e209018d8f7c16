import { useState } from "react";
import { useQuery, type QueryKey } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { DefectCause } from "@shared/api/causes";
import type { CauseConfidence } from "@shared/domain";
import { Button } from "@/components/ui/button";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { count, dateTime } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { causeKeys, useTagDefect, useUntagDefect } from "../api/causes.queries";
import { CauseChips, ConfidenceIcon } from "./cause-marks";
import { TaggingForm } from "./tagging-form";

type Brief = { tag: string; tagName: string; confidence: CauseConfidence };

function RemoveTagging({ defectId, link, affects }: { defectId: number; link: DefectCause; affects: readonly QueryKey[] }) {
  const { t } = useTranslation("process");
  const [open, setOpen] = useState(false);
  const [reason, setReason] = useState("");
  const untag = useUntagDefect(defectId, { affects });
  if (!open) {
    return (
      <Button variant="secondary" onClick={() => setOpen(true)} aria-label={t("causes.defect.removeLabel", { name: link.tagName })}>
        {t("causes.defect.remove")}
      </Button>
    );
  }
  return (
    <form
      className="flex w-full flex-wrap items-end gap-2"
      aria-label={t("causes.defect.removeLabel", { name: link.tagName })}
      onSubmit={(e) => {
        e.preventDefault();
        untag.mutate({ linkId: link.id, reason: reason.trim() || undefined });
      }}
    >
      <label className="flex min-w-56 flex-1 flex-col gap-1">
        <span className="text-sm font-semibold text-ink-800">{t("causes.defect.why")}</span>
        <input
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          maxLength={500}
          className="min-h-11 rounded-md border border-ink-300 bg-white px-3 text-sm"
        />
      </label>
      <Button type="submit" variant="danger" disabled={untag.isPending}>
        {untag.isPending ? t("causes.defect.removing") : t("causes.defect.removeTagging")}
      </Button>
      <Button variant="ghost" onClick={() => setOpen(false)}>
        {t("ui.keepIt")}
      </Button>
      {untag.isError ? (
        <div className="w-full">
          <Notice tone="error">{untag.error.message}</Notice>
        </div>
      ) : null}
    </form>
  );
}

function HistoryList({ history }: { history: DefectCause[] }) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  if (history.length === 0) return <p className="text-sm text-ink-600">{t("causes.defect.neverTagged")}</p>;
  return (
    <ol className="space-y-2" data-testid="cause-history">
      {history.map((h) => (
        <li
          key={h.id}
          className={`rounded-md border px-3 py-2 text-sm ${h.removedAt ? "border-dashed border-ink-300 bg-ink-50" : "border-ink-200 bg-white"}`}
          data-testid="cause-history-item"
          data-removed={h.removedAt ? "true" : "false"}
        >
          <div className="flex flex-wrap items-center gap-2">
            <ConfidenceIcon confidence={h.confidence} className="h-4 w-4 text-strand-800" />
            <span className={`font-semibold ${h.removedAt ? "line-through decoration-ink-500" : ""}`}>{h.tagName}</span>
            <span className="text-ink-700">{term("causeConfidence", h.confidence).toLowerCase()}</span>
            <span className="font-semibold text-ink-700">{h.removedAt ? t("causes.defect.removed") : t("causes.defect.live")}</span>
          </div>
          <div className="text-ink-700">
            {h.note
              ? t("causes.defect.taggedByNote", { name: h.by?.name ?? t("causes.defect.someone"), at: dateTime(h.at), note: h.note })
              : t("causes.defect.taggedBy", { name: h.by?.name ?? t("causes.defect.someone"), at: dateTime(h.at) })}
          </div>
          {h.removedAt ? (
            <div className="text-ink-700">
              {t("causes.defect.removedBy", { name: h.removedBy?.name ?? t("causes.defect.someone"), at: dateTime(h.removedAt) })}
            </div>
          ) : null}
        </li>
      ))}
    </ol>
  );
}

/**
 * A defect's causes on the slab page: the live ones as chips for everyone who reads causes; for those
 * who tag, adding and removing; and the whole tagging history on request.
 */
export function DefectCausesPanel({ defectId, causes, canTag, affects }: { defectId: number; causes: Brief[]; canTag: boolean; affects: readonly QueryKey[] }) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  const [editing, setEditing] = useState(false);
  const [historyOpen, setHistoryOpen] = useState(false);
  const detail = useQuery({ ...causeKeys.defect(defectId), enabled: editing || historyOpen });
  const taxonomy = useQuery({ ...causeKeys.taxonomy(false), enabled: editing });
  const tag = useTagDefect(defectId, { affects });
  // A fresh form after each tagging that went through; a refused one keeps what was entered.
  const [formKey, setFormKey] = useState(0);
  // After a tagging the editor closes (the chips show the result) and says so in one line.
  const [added, setAdded] = useState<number | null>(null);
  return (
    <div className="space-y-2" data-testid="defect-causes">
      <div className="flex flex-wrap items-center gap-2">
        <span className="text-xs font-semibold uppercase text-ink-600">{t("causes.defect.causes")}</span>
        <CauseChips causes={causes} />
        {added !== null && !editing ? (
          <span role="status" className="text-sm font-semibold text-ok-700" data-testid="causes-added">
            ✓ {t("causes.defect.added", { count: added, n: count(added) })}
          </span>
        ) : null}
      </div>
      <div className="flex flex-wrap gap-2">
        {canTag && !editing ? (
          <Button
            variant="secondary"
            onClick={() => {
              setEditing(true);
              setAdded(null);
              tag.reset();
            }}
            data-testid="edit-causes"
          >
            {t("causes.defect.edit")}
          </Button>
        ) : null}
        <Button variant="ghost" aria-expanded={historyOpen} onClick={() => setHistoryOpen((o) => !o)} data-testid="cause-history-toggle">
          {historyOpen ? t("causes.defect.hideHistory") : t("causes.defect.history")}
        </Button>
      </div>
      {editing ? (
        <div className="space-y-4 rounded-md border border-ink-200 bg-ink-50 p-3" data-testid="cause-editor">
          {detail.isPending ? (
            <Spinner label={t("causes.defect.loadingCauses")} />
          ) : detail.isError ? (
            <Notice tone="error">{detail.error.message}</Notice>
          ) : detail.data.current.length ? (
            <ul className="space-y-2">
              {detail.data.current.map((c) => (
                <li key={c.id} className="flex flex-wrap items-center gap-2 rounded-md bg-white px-3 py-2 text-sm" data-testid="live-cause">
                  <ConfidenceIcon confidence={c.confidence} className="h-4 w-4 text-strand-800" />
                  <span className="font-semibold">{c.tagName}</span>
                  <span className="text-ink-700">{term("causeConfidence", c.confidence).toLowerCase()}</span>
                  <span className="mr-auto text-xs text-ink-600">
                    {c.by?.name ?? ""}, {dateTime(c.at)}
                  </span>
                  <RemoveTagging defectId={defectId} link={c} affects={affects} />
                </li>
              ))}
            </ul>
          ) : null}
          <h3 className="text-sm font-bold text-ink-900">{t("causes.defect.addCauses")}</h3>
          {taxonomy.isPending ? (
            <Spinner label={t("causes.loadingTags")} />
          ) : taxonomy.isError ? (
            <Notice tone="error">{taxonomy.error.message}</Notice>
          ) : (
            <TaggingForm
              key={formKey}
              name={`defect-${defectId}`}
              taxonomy={taxonomy.data}
              submitLabel={tag.isPending ? t("ui.adding") : t("causes.defect.addThese")}
              busy={tag.isPending}
              onSubmit={(v) =>
                tag.mutate(v, {
                  onSuccess: () => {
                    setFormKey((k) => k + 1);
                    setEditing(false);
                    setAdded(v.tags.length);
                  },
                })
              }
              onCancel={() => setEditing(false)}
            />
          )}
          {tag.isError ? <Notice tone="error">{tag.error.message}</Notice> : null}
        </div>
      ) : null}
      {historyOpen ? (
        detail.isPending ? (
          <Spinner label={t("causes.defect.loadingHistory")} />
        ) : detail.isError ? (
          <Notice tone="error">{detail.error.message}</Notice>
        ) : (
          <HistoryList history={detail.data.history} />
        )
      ) : null}
    </div>
  );
}
