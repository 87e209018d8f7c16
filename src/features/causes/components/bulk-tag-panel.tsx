import { useState } from "react";
import { useQuery, type QueryKey } from "@tanstack/react-query";
import type { BulkTag, BulkTagResult, TagDefect } from "@shared/api/causes";
import { Button } from "@/components/ui/button";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { SeverityMark } from "@/components/ui/marks";
import { plural } from "@/lib/format";
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
    bulk.mutate(
      { ...pending.input, dryRun: false },
      {
        onSuccess: (r) => {
          setWritten(r);
          setPending(null);
          onWritten?.(r, namesOf(pending.input.tags));
        },
      },
    );
  };

  // What is asked, in the taxonomy's names, so the count is read against the choice it counts.
  const namesOf = (codes: string[]) => codes.map((c) => taxonomy.data?.groups.flatMap((g) => g.tags).find((t) => t.code === c)?.name ?? c);
  if (taxonomy.isPending) return <Spinner label="Loading the cause tags" />;
  if (taxonomy.isError) return <Notice tone="error">{taxonomy.error.message}</Notice>;
  return (
    <div className="space-y-4" data-testid="bulk-tag">
      {written ? (
        <div data-testid="bulk-result">
          <Notice tone="ok" title="Written">
            <span data-testid="bulk-result-text">
              {plural(written.tagged, "tagging")} written, {written.unchanged.toLocaleString("en-GB")} unchanged
            </span>{" "}
            — over {plural(written.defects, "defect")} of {describe}.
          </Notice>
        </div>
      ) : null}
      {pending ? (
        <div className="space-y-3 rounded-md border-2 border-strand-600 bg-strand-50 p-3" data-testid="bulk-preview">
          <p className="text-sm">
            <strong data-testid="bulk-preview-defects">{plural(pending.preview.defects, "defect")}</strong> of {describe} would be tagged:{" "}
            <strong data-testid="bulk-preview-tagged">{plural(pending.preview.tagged, "new or changed tagging")}</strong>,{" "}
            <span data-testid="bulk-preview-unchanged">{pending.preview.unchanged.toLocaleString("en-GB")} already as asked</span>. Nothing is written yet.
          </p>
          <p className="text-sm" data-testid="bulk-preview-causes">
            {pending.input.tags.length === 1 ? "Cause" : "Causes"}: <strong>{namesOf(pending.input.tags).join(", ")}</strong>, {pending.input.confidence}
            {pending.input.note ? ` — “${pending.input.note}”` : ""}
          </p>
          {pending.preview.sample.length ? (
            <div>
              <div className="text-xs font-semibold uppercase text-ink-600">
                First {Math.min(pending.preview.sample.length, pending.preview.defects)} of them
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
              {bulk.isPending ? "Writing…" : `Tag ${plural(pending.preview.defects, "defect")}`}
            </Button>
            <Button variant="ghost" onClick={() => setPending(null)}>
              Change the choice
            </Button>
          </div>
        </div>
      ) : null}
      {bulk.isError ? <Notice tone="error">{bulk.error.message}</Notice> : null}
      {!pending ? (
        <TaggingForm
          name={`bulk-${selection.kind}`}
          taxonomy={taxonomy.data}
          submitLabel={bulk.isPending ? "Counting…" : "Count the defects first"}
          busy={bulk.isPending}
          onSubmit={preview}
          onCancel={onClose}
          initial={last}
          extra={
            defectTypes && defectTypes.length ? (
              <fieldset>
                <legend className="mb-1 text-sm font-semibold text-ink-800">Only these defect types (none chosen: every type)</legend>
                <div className="flex flex-wrap gap-2">
                  {defectTypes.map((t) => (
                    <label key={t.code} className="flex min-h-11 cursor-pointer items-center gap-2 rounded-md border border-ink-300 bg-white px-3 text-sm">
                      <input
                        type="checkbox"
                        className="h-4 w-4"
                        checked={types.includes(t.code)}
                        onChange={(e) => setTypes(e.target.checked ? [...types, t.code] : types.filter((c) => c !== t.code))}
                      />
                      <span className="font-semibold">{t.code}</span> {t.name}
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
