import { useTranslation } from "react-i18next";
import type { ImportResult } from "@shared/api/imports";
import { Stat } from "@/components/ui/card";
import { count } from "@/lib/format";

/** Counts of a checked or imported file, and the rows that stop it. */
export function ImportCounts({ result, real }: { result: ImportResult; real: boolean }) {
  const { t } = useTranslation("admin");
  const note = !real && !result.valid ? t("imports.counts.ofValid") : undefined;
  return (
    <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="import-counts">
      <Stat label={t("imports.counts.rows")} value={count(result.rows)} />
      <Stat
        label={real ? t("imports.counts.created") : t("imports.counts.wouldCreate")}
        note={note}
        value={<span data-testid="count-created">{count(result.counts.created)}</span>}
      />
      <Stat
        label={real ? t("imports.counts.updated") : t("imports.counts.wouldUpdate")}
        note={note}
        value={<span data-testid="count-updated">{count(result.counts.updated)}</span>}
      />
      <Stat label={t("imports.counts.unchanged")} note={note} value={<span data-testid="count-unchanged">{count(result.counts.unchanged)}</span>} />
    </div>
  );
}

export function ImportErrors({ result }: { result: ImportResult }) {
  const { t } = useTranslation("admin");
  if (result.errorCount === 0) return null;
  const more = result.errorCount - result.errors.length;
  return (
    <div className="space-y-2">
      <h3 className="text-base font-semibold text-alarm-700" data-testid="import-error-count">
        <span aria-hidden>× </span>
        {t("imports.errors.count", { count: result.errorCount, n: count(result.errorCount) })}
      </h3>
      <div className="max-h-[28rem] overflow-auto rounded-md border border-ink-200">
        <table className="w-full text-sm" data-testid="import-errors">
          <thead className="sticky top-0 bg-ink-50">
            <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
              <th className="px-3 py-2 text-right">{t("imports.errors.row")}</th>
              <th className="px-3 py-2">{t("imports.errors.column")}</th>
              <th className="px-3 py-2">{t("imports.errors.problem")}</th>
            </tr>
          </thead>
          <tbody>
            {result.errors.map((e, i) => (
              <tr key={i} className="border-b border-ink-100 align-top" data-testid="import-error">
                <td className="px-3 py-2 text-right font-semibold tabular-nums" data-field="row">
                  {e.row}
                </td>
                <td className="px-3 py-2" data-field="column">
                  {e.column ? <code className="font-mono text-[13px]">{e.column}</code> : <span className="text-ink-500">{t("imports.errors.wholeRow")}</span>}
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
          {t("imports.errors.more", { count: more, n: count(more) })}
        </p>
      ) : null}
      <p className="text-xs text-ink-600">{t("imports.errors.rowNumbers")}</p>
    </div>
  );
}
