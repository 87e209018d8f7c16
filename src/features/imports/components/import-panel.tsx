import { useRef, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import { Link } from "react-router";
import { IMPORT_KINDS, IMPORT_LIMITS, IMPORT_MAX_BYTES, type ImportKind } from "@shared/api/imports";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import type { UploadProgress } from "@/lib/api-client";
import { bytes, count } from "@/lib/format";
import { templateUrl, useImportFile, type ImportOutcome } from "../api/imports.queries";
import { ImportColumns } from "./import-columns";
import { ImportCounts, ImportErrors } from "./import-preview";

type Sending = { dryRun: boolean; progress: UploadProgress | null; controller: AbortController };

/**
 * Pick a kind and a file; the file is checked at once (a dry run that writes nothing), the problems
 * are listed by row and column, and only a clean file can be imported — all rows or none.
 */
export function ImportPanel({ onImported }: { onImported?: () => void }) {
  const { t } = useTranslation("admin");
  // A kind's words: its label, its name inside a sentence ("heats"; German keeps its capitals), its text.
  const kindText = (k: ImportKind, part: "label" | "inSentence" | "text") => t(`imports.kinds.${k}.${part}`);
  const [kind, setKind] = useState<ImportKind>("heats");
  const [file, setFile] = useState<File | null>(null);
  const [check, setCheck] = useState<ImportOutcome | null>(null);
  const [final, setFinal] = useState<ImportOutcome | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [sending, setSending] = useState<Sending | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);
  const send = useImportFile({ onImported: () => onImported?.() });

  const reset = () => {
    setCheck(null);
    setFinal(null);
    setError(null);
  };

  const run = async (f: File, k: ImportKind, dryRun: boolean) => {
    const controller = new AbortController();
    setError(null);
    if (!dryRun) setFinal(null);
    setSending({ dryRun, progress: null, controller });
    try {
      const outcome = await send.mutateAsync({
        kind: k,
        file: f,
        dryRun,
        signal: controller.signal,
        onProgress: (progress) => setSending((s) => (s && s.controller === controller ? { ...s, progress } : s)),
      });
      if (outcome.status === "checked") setCheck(outcome);
      else setFinal(outcome);
    } catch (err) {
      if ((err as Error).name !== "AbortError") setError((err as Error).message);
    } finally {
      setSending((s) => (s?.controller === controller ? null : s));
    }
  };

  const pick = (f: File | null) => {
    reset();
    setFile(f);
    if (!f) return;
    if (f.size > IMPORT_MAX_BYTES) {
      setError(t("imports.panel.tooLarge", { name: f.name, size: bytes(f.size), limit: bytes(IMPORT_MAX_BYTES) }));
      return;
    }
    void run(f, kind, true);
  };

  const checked = check?.status === "checked" ? check.result : null;
  const canImport = Boolean(file && checked?.valid && !sending && final?.status !== "imported");

  return (
    <div className="space-y-5">
      <Card title={t("imports.panel.step1")}>
        <div role="radiogroup" aria-label={t("imports.panel.kindOfFile")} className="grid gap-3 md:grid-cols-3">
          {IMPORT_KINDS.map((k) => (
            <label
              key={k}
              className={`flex min-h-14 cursor-pointer gap-3 rounded-md border-2 p-3 ${k === kind ? "border-strand-700 bg-strand-50" : "border-ink-200 bg-white hover:border-ink-300"}`}
            >
              <input
                type="radio"
                name="import-kind"
                value={k}
                checked={k === kind}
                disabled={Boolean(sending)}
                onChange={() => {
                  setKind(k);
                  reset();
                  setFile(null);
                  if (inputRef.current) inputRef.current.value = "";
                }}
                className="mt-1 h-5 w-5 accent-strand-700"
              />
              <span>
                <span className="block font-semibold">{kindText(k, "label")}</span>
                <span className="block text-xs text-ink-600">{kindText(k, "text")}</span>
              </span>
            </label>
          ))}
        </div>
      </Card>

      <div className="grid gap-5 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <div className="space-y-5">
          <Card title={t("imports.panel.step2")}>
            <div className="space-y-4">
              <div className="flex flex-col gap-1">
                <label htmlFor="import-file" className="text-sm font-semibold text-ink-800">
                  {t("imports.panel.fileLabel", { what: kindText(kind, "inSentence") })}
                </label>
                <input
                  id="import-file"
                  ref={inputRef}
                  type="file"
                  accept=".xlsx,.csv,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet,text/csv"
                  disabled={Boolean(sending)}
                  onChange={(e) => {
                    const f = e.target.files?.[0] ?? null;
                    pick(f);
                    // Picking the same (fixed) file again must fire again.
                    e.target.value = "";
                  }}
                  className="block w-full min-h-12 rounded-md border border-ink-300 bg-white text-sm file:mr-3 file:min-h-12 file:cursor-pointer file:border-0 file:bg-ink-800 file:px-4 file:font-semibold file:text-white"
                />
                <p className="text-xs text-ink-600">{t("imports.panel.fileHint", { size: bytes(IMPORT_MAX_BYTES), rows: count(IMPORT_LIMITS.rows) })}</p>
              </div>
              {file ? (
                <p className="text-sm" data-testid="import-file-name">
                  <Trans
                    t={t}
                    i18nKey="imports.panel.file"
                    values={{ name: file.name, size: bytes(file.size) }}
                    components={{ 1: <span className="font-semibold" /> }}
                  />
                </p>
              ) : null}
              {sending ? (
                <div className="space-y-2" data-testid="import-progress">
                  <ProgressBar
                    label={
                      sending.progress?.sent
                        ? sending.dryRun
                          ? t("imports.panel.checking")
                          : t("imports.panel.importing")
                        : file
                          ? t("imports.panel.uploading", { name: file.name })
                          : t("imports.panel.uploadingFile")
                    }
                    value={sending.progress?.sent ? null : (sending.progress?.fraction ?? 0)}
                    detail={
                      sending.progress && !sending.progress.sent
                        ? t("imports.panel.progress", { loaded: bytes(sending.progress.loaded), total: bytes(sending.progress.total) })
                        : t("imports.panel.oneMoment")
                    }
                  />
                  <Button variant="ghost" onClick={() => sending.controller.abort()}>
                    {t("imports.panel.cancel")}
                  </Button>
                </div>
              ) : null}
              {error ? <Notice tone="error">{error}</Notice> : null}
            </div>
          </Card>

          {checked ? (
            <Card title={checked.fileName ? t("imports.panel.step3", { name: checked.fileName }) : t("imports.panel.step3File")}>
              <div className="space-y-4" data-testid="import-check">
                <ImportCounts result={checked} real={false} />
                {checked.valid ? (
                  <Notice tone="ok" title={t("imports.panel.readyTitle")}>
                    {t("imports.panel.ready", { count: checked.rows, n: count(checked.rows) })}
                  </Notice>
                ) : (
                  <ImportErrors result={checked} />
                )}
                {final?.status === "imported" ? (
                  <p className="text-sm font-semibold text-ok-700">{t("imports.panel.alreadyImported")}</p>
                ) : (
                  <div className="flex flex-wrap items-center gap-3">
                    <Button size="lg" disabled={!canImport} onClick={() => file && void run(file, kind, false)}>
                      {t("imports.panel.import", { count: checked.rows, n: count(checked.rows) })}
                    </Button>
                    {!checked.valid ? <span className="text-sm text-ink-700">{t("imports.panel.fixFile")}</span> : null}
                    {file && !sending ? (
                      <Button variant="ghost" onClick={() => void run(file, kind, true)}>
                        {t("imports.panel.checkAgain")}
                      </Button>
                    ) : null}
                  </div>
                )}
              </div>
            </Card>
          ) : null}

          {final ? (
            <Card title={t("imports.panel.step4")}>
              <div className="space-y-4" data-testid="import-result">
                {final.status === "imported" ? (
                  <>
                    <Notice tone="ok" title={t("imports.panel.importedTitle")}>
                      {t("imports.panel.imported", {
                        file: final.result.fileName ?? t("imports.panel.theFile"),
                        created: t(`imports.kinds.${kind}.count`, { count: final.result.counts.created, n: count(final.result.counts.created) }),
                        updated: count(final.result.counts.updated),
                        unchanged: count(final.result.counts.unchanged),
                        slabs: t("imports.panel.slabs", { count: final.result.slabsResolved, n: count(final.result.slabsResolved) }),
                      })}
                    </Notice>
                    <ImportCounts result={final.result} real />
                    {kind === "heats" || kind === "slabs" ? (
                      <Link to="/heats" className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline">
                        {t("imports.panel.toHeats")}
                      </Link>
                    ) : null}
                  </>
                ) : (
                  <>
                    <Notice tone="error" title={t("imports.panel.notImportedTitle")}>
                      {t("imports.panel.notImported")}
                    </Notice>
                    <ImportErrors result={final.result} />
                  </>
                )}
              </div>
            </Card>
          ) : null}
        </div>

        <Card title={t("imports.panel.columnsOf", { what: kindText(kind, "inSentence") })}>
          <div className="space-y-3">
            <a
              href={templateUrl(kind)}
              download
              className="inline-flex min-h-12 items-center gap-2 rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              data-testid="template-link"
            >
              <span aria-hidden>⤓</span> {t("imports.panel.template", { what: kindText(kind, "inSentence") })}
            </a>
            <p className="text-xs text-ink-600">{t("imports.panel.headersHint")}</p>
            <div className="max-h-[40rem] overflow-y-auto rounded-md border border-ink-100 px-3">
              <ImportColumns kind={kind} />
            </div>
          </div>
        </Card>
      </div>
    </div>
  );
}
