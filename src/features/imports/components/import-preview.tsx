import type { ImportResult } from "@shared/api/imports";
import { Stat } from "@/components/ui/card";
import { plural } from "@/lib/format";

/** Counts of a checked or imported file, and the rows that stop it. */
export function ImportCounts({ result, real }: { result: ImportResult; real: boolean }) {
  const note = !real && !result.valid ? "of the valid rows" : undefined;
  return (
    <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="import-counts">
      <Stat label="Rows in the file" value={result.rows.toLocaleString("en-GB")} />
      <Stat
        label={real ? "Created" : "Would create"}
        note={note}
        value={<span data-testid="count-created">{result.counts.created.toLocaleString("en-GB")}</span>}
      />
      <Stat
        label={real ? "Updated" : "Would update"}
        note={note}
        value={<span data-testid="count-updated">{result.counts.updated.toLocaleString("en-GB")}</span>}
      />
      <Stat label="Unchanged" note={note} value={<span data-testid="count-unchanged">{result.counts.unchanged.toLocaleString("en-GB")}</span>} />
    </div>
  );
}

export function ImportErrors({ result }: { result: ImportResult }) {
  if (result.errorCount === 0) return null;
  const more = result.errorCount - result.errors.length;
  return (
    <div className="space-y-2">
      <h3 className="text-base font-semibold text-alarm-700" data-testid="import-error-count">
        <span aria-hidden>× </span>
        {plural(result.errorCount, "problem")} in the file — nothing can be imported until they are fixed
      </h3>
      <div className="max-h-[28rem] overflow-auto rounded-md border border-ink-200">
        <table className="w-full text-sm" data-testid="import-errors">
          <thead className="sticky top-0 bg-ink-50">
            <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
              <th className="px-3 py-2 text-right">Row</th>
              <th className="px-3 py-2">Column</th>
              <th className="px-3 py-2">Problem</th>
            </tr>
          </thead>
          <tbody>
            {result.errors.map((e, i) => (
              <tr key={i} className="border-b border-ink-100 align-top" data-testid="import-error">
                <td className="px-3 py-2 text-right font-semibold tabular-nums" data-field="row">
                  {e.row}
                </td>
                <td className="px-3 py-2" data-field="column">
                  {e.column ? <code className="font-mono text-[13px]">{e.column}</code> : <span className="text-ink-500">whole row</span>}
                </td>
                <td className="px-3 py-2" data-field="message">
                  {e.message}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {more > 0 ? (
        <p className="text-sm font-semibold text-ink-800" data-testid="import-errors-more">
          … and {plural(more, "more problem")} not listed. Fix these first and check the file again.
        </p>
      ) : null}
      <p className="text-xs text-ink-600">Row numbers are as the spreadsheet shows them: the header is row 1.</p>
    </div>
  );
}
