import { useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import { Link } from "react-router";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import { bytes } from "@/lib/format";
import { useExportReport } from "../api/export.queries";
import { useSaveReport } from "../api/saved-reports.queries";
import type { ReportKind } from "./report-params";

/** "Export to Excel": the workbook of the very query on screen, with its progress while it downloads. */
export function ExportButton({ kind, query, disabled }: { kind: ReportKind; query: string; disabled?: boolean }) {
  const { t } = useTranslation("reports");
  const exp = useExportReport(kind);
  return (
    <div className="flex min-w-52 flex-col gap-2">
      <Button variant="secondary" onClick={() => exp.mutate(query)} disabled={disabled || exp.isPending} data-testid="export-excel">
        <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
          <path d="M8 2v8m-3.5-3.5L8 10l3.5-3.5M3 13h10" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        </svg>
        {exp.isPending ? t("actions.preparing") : t("actions.export")}
      </Button>
      {exp.progress ? (
        <ProgressBar
          label={t("actions.downloading")}
          value={exp.progress.fraction}
          detail={exp.progress.loaded ? bytes(exp.progress.loaded) : t("actions.building")}
        />
      ) : null}
      {exp.isError ? <Notice tone="error">{exp.error.message}</Notice> : null}
      {exp.isSuccess ? (
        <span className="text-xs text-ink-600" role="status">
          {t("actions.exported", { name: exp.data.name, size: bytes(exp.data.size) })}
        </span>
      ) : null}
    </div>
  );
}

/** "Save this report": its kind and query string under a name, listed on the reports home. */
export function SaveReport({ kind, query, suggestedName }: { kind: ReportKind; query: string; suggestedName: string }) {
  const { t } = useTranslation("reports");
  const [open, setOpen] = useState(false);
  const [name, setName] = useState(suggestedName);
  const save = useSaveReport();
  if (!open) {
    return (
      <div className="flex flex-col gap-2">
        <Button
          variant="secondary"
          onClick={() => {
            setName(suggestedName);
            save.reset();
            setOpen(true);
          }}
        >
          {t("actions.save")}
        </Button>
        {save.isSuccess ? (
          <span className="text-xs text-ink-600" role="status" data-testid="report-saved">
            <Trans
              t={t}
              i18nKey="actions.saved"
              values={{ name: save.data.name }}
              components={{ 1: <Link to="/reports" className="font-semibold text-strand-700 underline" /> }}
            />
          </span>
        ) : null}
      </div>
    );
  }
  return (
    <form
      className="flex flex-wrap items-end gap-2"
      aria-label={t("actions.save")}
      onSubmit={(e) => {
        e.preventDefault();
        save.mutate({ name: name.trim(), reportKind: kind, query }, { onSuccess: () => setOpen(false) });
      }}
    >
      <label className="flex flex-col gap-1">
        <span className="text-sm font-semibold text-ink-800">{t("actions.name")}</span>
        <input
          value={name}
          onChange={(e) => setName(e.target.value)}
          maxLength={120}
          required
          // eslint-disable-next-line jsx-a11y/no-autofocus -- the field appears because the person asked to save; they type next
          autoFocus
          className="min-h-11 w-72 max-w-full rounded-md border border-ink-300 bg-white px-3 text-ink-900"
        />
      </label>
      <Button type="submit" disabled={save.isPending || !name.trim()}>
        {save.isPending ? t("actions.saving") : t("actions.saveButton")}
      </Button>
      <Button variant="ghost" onClick={() => setOpen(false)}>
        {t("actions.cancel")}
      </Button>
      {save.isError ? (
        <div className="w-full">
          <Notice tone="error">{save.error.message}</Notice>
        </div>
      ) : null}
    </form>
  );
}
