import { useState } from "react";
import { useQuery, type QueryKey } from "@tanstack/react-query";
import { Trans, useTranslation } from "react-i18next";
import type { BulkTag, BulkTagResult, TagDefect } from "@shared/api/causes";
import { Button } from "@/components/ui/button";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { SeverityMark } from "@/components/ui/marks";
import { count } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { causeKeys, useBulkTag } from "../api/causes.queries";
import { TaggingForm } from "./tagging-form";

export type BulkSelection = BulkTag["selection"];

/**
 * The same causes on many defects at once: a heat's, a sequence's or a report filter's. First a dry
 * run says how many defects and taggings it would touch (with a sample); only then is it written.
 */
export function BulkTagPanel({
  selection,
  describe,
  defectTypes,
  affects,
  onClose,
  onWritten,
}: {
  selection: BulkSelection;
  /** "the defects of heat H123": for the headings and the result line. */
  describe: string;
  /** Defect types to narrow a heat or sequence to (none: no narrowing offered). */
  defectTypes?: { code: string; name: string }[];
  affects: readonly QueryKey[];
  onClose?: () => void;
  /** Told once the taggings are written, with the causes' names (a worklist closes the panel and says so itself). */
  onWritten?: (result: BulkTagResult, causes: string[]) => void;
}) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  const taxonomy = useQuery(causeKeys.taxonomy(false));
  const bulk = useBulkTag({ affects });
  const [types, setTypes] = useState<string[]>([]);
  const [pending, setPending] = useState<{ input: BulkTag; preview: BulkTagResult } | null>(null);
  const [written, setWritten] = useState<BulkTagResult | null>(null);
  // What was last asked, so "Change the choice" comes back to it.
  const [last, setLast] = useState<TagDefect | undefined>(undefined);

  const preview = (v: TagDefect) => {
    const input: BulkTag = { ...v, selection, defectType: types.length ? types : undefined };
    setWritten(null);
    setLast(v);
    bulk.mutate({ ...input, dryRun: true }, { onSuccess: (r) => setPending({ input, preview: r }) });
  };
  const apply = () => {
    if (!pending) return;
    const { input } = pending;
    // The promise, not mutate's callbacks: the write refreshes the lists, and a worklist that comes
    // back without the selected defects closes this panel; mutate's callbacks run only while the
    // panel is on screen, so what was written would go unsaid. A refusal shows through bulk.isError.
    bulk.mutateAsync({ ...input, dryRun: false }).then(
      (r) => {
        setWritten(r);
        setPending(null);
        onWritten?.(r, namesOf(input.tags));
      },
      () => undefined,
    );
  };

  // What is asked, in the taxonomy's names, so the count is read against the choice it counts.
  const namesOf = (codes: string[]) => codes.map((c) => taxonomy.data?.groups.flatMap((g) => g.tags).find((x) => x.code === c)?.name ?? c);
  if (taxonomy.isPending) return <Spinner label={t("causes.loadingTags")} />;
  if (taxonomy.isError) return <Notice tone="error">{taxonomy.error.message}</Notice>;
  return (
    <div className="space-y-4" data-testid="bulk-tag">
      {written ? (
        <div data-testid="bulk-result">
          <Notice tone="ok" title={t("causes.bulk.written")}>
            <Trans
              t={t}
              i18nKey="causes.bulk.result"
              count={written.defects}
              values={{
                n: count(written.defects),
                describe,
                taggings: t("causes.bulk.taggingsWritten", { count: written.tagged, n: count(written.tagged), unchanged: count(written.unchanged) }),
              }}
              components={{ 1: <span data-testid="bulk-result-text" /> }}
            />
          </Notice>
        </div>
      ) : null}
      {pending ? (
        <div className="space-y-3 rounded-md border-2 border-strand-600 bg-strand-50 p-3" data-testid="bulk-preview">
          <p className="text-sm">
            <Trans
              t={t}
              i18nKey="causes.bulk.preview"
              values={{
                describe,
                defects: t("causes.bulk.defects", { count: pending.preview.defects, n: count(pending.preview.defects) }),
                tagged: t("causes.bulk.newTaggings", { count: pending.preview.tagged, n: count(pending.preview.tagged) }),
                unchanged: count(pending.preview.unchanged),
              }}
              components={{
                1: <strong data-testid="bulk-preview-defects" />,
                2: <strong data-testid="bulk-preview-tagged" />,
                3: <span data-testid="bulk-preview-unchanged" />,
              }}
            />
          </p>
          <p className="text-sm" data-testid="bulk-preview-causes">
            <Trans
              t={t}
              i18nKey={pending.input.note ? "causes.bulk.causesNote" : "causes.bulk.causes"}
              count={pending.input.tags.length}
              values={{
                names: namesOf(pending.input.tags).join(", "),
                confidence: term("causeConfidence", pending.input.confidence).toLowerCase(),
                note: pending.input.note,
              }}
              components={{ 1: <strong /> }}
            />
          </p>
          {pending.preview.sample.length ? (
            <div>
              <div className="text-xs font-semibold uppercase text-ink-600">
                {t("causes.bulk.firstOf", { n: count(Math.min(pending.preview.sample.length, pending.preview.defects)) })}
              </div>
              <ul className="mt-1 grid gap-1 sm:grid-cols-2 xl:grid-cols-3" data-testid="bulk-sample">
                {pending.preview.sample.map((d) => (
                  <li key={d.id} className="flex flex-wrap items-center gap-2 rounded bg-white px-2 py-1 text-sm">
                    <span className="font-semibold">{d.slabId}</span>
                    <span className="rounded bg-ink-100 px-1.5 text-xs font-bold">{d.type}</span>
                    <SeverityMark severity={d.severity} />
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          <div className="flex flex-wrap gap-2">
            <Button onClick={apply} disabled={bulk.isPending || pending.preview.defects === 0} data-testid="bulk-apply">
              {bulk.isPending ? t("causes.bulk.writing") : t("causes.bulk.tagN", { count: pending.preview.defects, n: count(pending.preview.defects) })}
            </Button>
            <Button variant="ghost" onClick={() => setPending(null)}>
              {t("causes.bulk.changeChoice")}
            </Button>
          </div>
        </div>
      ) : null}
      {bulk.isError ? <Notice tone="error">{bulk.error.message}</Notice> : null}
      {!pending ? (
        <TaggingForm
          name={`bulk-${selection.kind}`}
          taxonomy={taxonomy.data}
          submitLabel={bulk.isPending ? t("causes.bulk.counting") : t("causes.bulk.countFirst")}
          busy={bulk.isPending}
          onSubmit={preview}
          onCancel={onClose}
          initial={last}
          extra={
            defectTypes && defectTypes.length ? (
              <fieldset>
                <legend className="mb-1 text-sm font-semibold text-ink-800">{t("causes.bulk.onlyTypes")}</legend>
                <div className="flex flex-wrap gap-2">
                  {defectTypes.map((dt) => (
                    <label key={dt.code} className="flex min-h-11 cursor-pointer items-center gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm">
                      <input
                        type="checkbox"
                        className="h-4 w-4"
                        checked={types.includes(dt.code)}
                        onChange={(e) => setTypes(e.target.checked ? [...types, dt.code] : types.filter((c) => c !== dt.code))}
                      />
                      <span className="font-semibold">{dt.code}</span> {dt.name}
                    </label>
                  ))}
                </div>
              </fieldset>
            ) : null
          }
        />
      ) : null}
    </div>
  );
}
