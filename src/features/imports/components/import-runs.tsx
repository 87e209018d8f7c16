import { useTranslation } from "react-i18next";
import type { ImportRun } from "@shared/api/imports";
import { count, dateTime, DASH } from "@/lib/format";

export function ImportRunsTable({ runs }: { runs: ImportRun[] }) {
  const { t } = useTranslation("admin");
  if (runs.length === 0) return <p className="text-sm text-ink-600">{t("imports.runs.none")}</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="import-runs">
        <thead>
          <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="px-2 py-2">{t("imports.runs.finished")}</th>
            <th className="px-2 py-2">{t("imports.runs.kind")}</th>
            <th className="px-2 py-2">{t("imports.runs.from")}</th>
            <th className="px-2 py-2 text-right">{t("imports.runs.rows")}</th>
            <th className="px-2 py-2 text-right">{t("imports.runs.created")}</th>
            <th className="px-2 py-2 text-right">{t("imports.runs.updated")}</th>
            <th className="px-2 py-2 text-right">{t("imports.runs.unchanged")}</th>
            <th className="px-2 py-2 text-right">{t("imports.runs.slabsRecomputed")}</th>
            <th className="px-2 py-2">{t("imports.runs.by")}</th>
          </tr>
        </thead>
        <tbody>
          {runs.map((r) => (
            <tr key={r.id} className="border-b border-ink-100" data-testid="import-run">
              <td className="whitespace-nowrap px-2 py-2">{dateTime(r.finishedAt)}</td>
              <td className="px-2 py-2">{t(`imports.kinds.${r.kind}.label`)}</td>
              <td className="px-2 py-2">
                {r.source === "ingest" ? t("imports.runs.feed") : (r.fileName ?? t("imports.runs.upload"))}
                <span className="ml-1 text-xs uppercase text-ink-500">{r.format}</span>
              </td>
              <td className="px-2 py-2 text-right tabular-nums">{count(r.rows)}</td>
              <td className="px-2 py-2 text-right tabular-nums">{count(r.created)}</td>
              <td className="px-2 py-2 text-right tabular-nums">{count(r.updated)}</td>
              <td className="px-2 py-2 text-right tabular-nums">{count(r.unchanged)}</td>
              <td className="px-2 py-2 text-right tabular-nums">{count(r.slabsResolved)}</td>
              <td className="px-2 py-2">{r.by ?? DASH}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
