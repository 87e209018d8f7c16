import { useRef, useState } from "react";
import { Link } from "react-router";
import { IMPORT_KINDS, IMPORT_LIMITS, IMPORT_MAX_BYTES, type ImportKind } from "@shared/api/imports";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import type { UploadProgress } from "@/lib/api-client";
import { bytes, plural } from "@/lib/format";
import { templateUrl, useImportFile, type ImportOutcome } from "../api/imports.queries";
import { ImportColumns } from "./import-columns";
import { ImportCounts, ImportErrors } from "./import-preview";

const KINDS: Record<ImportKind, { label: string; text: string; one: string; many: string }> = {
  heats: { label: "Heats", text: "One row per heat: caster, grade, cast start, casting conditions and chemistry.", one: "heat", many: "heats" },
  slabs: { label: "Slabs", text: "One row per slab of heats already on record: strand, piece, dimensions, optional own values.", one: "slab", many: "slabs" },
  "process-samples": {
    label: "Process samples",
    text: "The level-2 samples per strand over time: speed, temperatures, brake, SEN, argon, mold level.",
    one: "sample",
    many: "samples",
  },
  products: {
    label: "Coils and plates",
    text: "The rolling mill's trace: each coil or plate id with the slab it was rolled from.",
    one: "coil or plate",
    many: "coils and plates",
  },
};

type Sending = { dryRun: boolean; progress: UploadProgress | null; controller: AbortController };

/**
 * Pick a kind and a file; the file is checked at once (a dry run that writes nothing), the problems
 * are listed by row and column, and only a clean file can be imported — all rows or none.
 */
export function ImportPanel({ onImported }: { onImported?: () => void }) {
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
      setError(`${f.name} is ${bytes(f.size)}; the limit is ${bytes(IMPORT_MAX_BYTES)}. Split the file into smaller ones.`);
      return;
    }
    void run(f, kind, true);
  };

  const checked = check?.status === "checked" ? check.result : null;
  const canImport = Boolean(file && checked?.valid && !sending && final?.status !== "imported");

  return (
    <div className="space-y-5">
      <Card title="1 · What does the file hold?">
        <div role="radiogroup" aria-label="Kind of file" className="grid gap-3 md:grid-cols-3">
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
                <span className="block font-semibold">{KINDS[k].label}</span>
                <span className="block text-xs text-ink-600">{KINDS[k].text}</span>
              </span>
            </label>
          ))}
        </div>
      </Card>

      <div className="grid gap-5 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <div className="space-y-5">
          <Card title="2 · Pick the file">
            <div className="space-y-4">
              <div className="flex flex-col gap-1">
                <label htmlFor="import-file" className="text-sm font-semibold text-ink-800">
                  Workbook (.xlsx) or CSV file of {KINDS[kind].label.toLowerCase()}
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
                <p className="text-xs text-ink-600">
                  Up to {bytes(IMPORT_MAX_BYTES)} and {IMPORT_LIMITS.rows.toLocaleString("en-GB")} rows. The first row holds the column headers (see the list of
                  columns). The file is checked as soon as you pick it; nothing is written until you confirm.
                </p>
              </div>
              {file ? (
                <p className="text-sm" data-testid="import-file-name">
                  File: <span className="font-semibold">{file.name}</span> ({bytes(file.size)})
                </p>
              ) : null}
              {sending ? (
                <div className="space-y-2" data-testid="import-progress">
                  <ProgressBar
                    label={
                      sending.progress?.sent
                        ? sending.dryRun
                          ? "Checking the rows on the server"
                          : "Importing the rows"
                        : `Uploading ${file?.name ?? "the file"}`
                    }
                    value={sending.progress?.sent ? null : (sending.progress?.fraction ?? 0)}
                    detail={sending.progress && !sending.progress.sent ? `${bytes(sending.progress.loaded)} of ${bytes(sending.progress.total)}` : "one moment"}
                  />
                  <Button variant="ghost" onClick={() => sending.controller.abort()}>
                    Cancel
                  </Button>
                </div>
              ) : null}
              {error ? <Notice tone="error">{error}</Notice> : null}
            </div>
          </Card>

          {checked ? (
            <Card title={`3 · Check of ${checked.fileName ?? "the file"}`}>
              <div className="space-y-4" data-testid="import-check">
                <ImportCounts result={checked} real={false} />
                {checked.valid ? (
                  <Notice tone="ok" title="Ready">
                    Every row is valid. Importing writes all {plural(checked.rows, "row")} in one step, or none if anything fails.
                  </Notice>
                ) : (
                  <ImportErrors result={checked} />
                )}
                {final?.status === "imported" ? (
                  <p className="text-sm font-semibold text-ok-700">✓ This file has been imported (see the result below). Pick another file to import more.</p>
                ) : (
                  <div className="flex flex-wrap items-center gap-3">
                    <Button size="lg" disabled={!canImport} onClick={() => file && void run(file, kind, false)}>
                      Import {plural(checked.rows, "row")}
                    </Button>
                    {!checked.valid ? <span className="text-sm text-ink-700">Fix the file, save it and pick it again to check it once more.</span> : null}
                    {file && !sending ? (
                      <Button variant="ghost" onClick={() => void run(file, kind, true)}>
                        Check again
                      </Button>
                    ) : null}
                  </div>
                )}
              </div>
            </Card>
          ) : null}

          {final ? (
            <Card title="4 · Result">
              <div className="space-y-4" data-testid="import-result">
                {final.status === "imported" ? (
                  <>
                    <Notice tone="ok" title="Imported">
                      {final.result.fileName ?? "The file"}: {plural(final.result.counts.created, KINDS[kind].one, KINDS[kind].many)} created,{" "}
                      {final.result.counts.updated} updated, {final.result.counts.unchanged} unchanged; conditions of{" "}
                      {plural(final.result.slabsResolved, "slab")} recomputed.
                    </Notice>
                    <ImportCounts result={final.result} real />
                    {kind === "heats" || kind === "slabs" ? (
                      <Link to="/heats" className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline">
                        Go to the heats list
                      </Link>
                    ) : null}
                  </>
                ) : (
                  <>
                    <Notice tone="error" title="Not imported">
                      The server found problems in the file, so nothing was written.
                    </Notice>
                    <ImportErrors result={final.result} />
                  </>
                )}
              </div>
            </Card>
          ) : null}
        </div>

        <Card title={`Columns of a ${KINDS[kind].label.toLowerCase()} file`}>
          <div className="space-y-3">
            <a
              href={templateUrl(kind)}
              download
              className="inline-flex min-h-12 items-center gap-2 rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              data-testid="template-link"
            >
              <span aria-hidden>⤓</span> Download the {KINDS[kind].label.toLowerCase()} template (.xlsx)
            </a>
            <p className="text-xs text-ink-600">
              Headers match whatever their case; the unit is part of the name. The template's second sheet describes each column. Importing a row again updates
              it.
            </p>
            <div className="max-h-[40rem] overflow-y-auto rounded-md border border-ink-100 px-3">
              <ImportColumns kind={kind} />
            </div>
          </div>
        </Card>
      </div>
    </div>
  );
}
