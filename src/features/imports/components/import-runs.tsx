import type { ImportRun } from "@shared/api/imports";
import { dateTime } from "@/lib/format";

const KIND_LABELS: Record<ImportRun["kind"], string> = { heats: "Heats", slabs: "Slabs", "process-samples": "Process samples", products: "Coils and plates" };

export function ImportRunsTable({ runs }: { runs: ImportRun[] }) {
  if (runs.length === 0) return <p className="text-sm text-ink-600">No imports yet.</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="import-runs">
        <thead>
          <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="px-2 py-2">Finished</th>
            <th className="px-2 py-2">Kind</th>
            <th className="px-2 py-2">From</th>
            <th className="px-2 py-2 text-right">Rows</th>
            <th className="px-2 py-2 text-right">Created</th>
            <th className="px-2 py-2 text-right">Updated</th>
            <th className="px-2 py-2 text-right">Unchanged</th>
            <th className="px-2 py-2 text-right">Slabs recomputed</th>
            <th className="px-2 py-2">By</th>
          </tr>
        </thead>
        <tbody>
          {runs.map((r) => (
            <tr key={r.id} className="border-b border-ink-100" data-testid="import-run">
              <td className="whitespace-nowrap px-2 py-2">{dateTime(r.finishedAt)}</td>
              <td className="px-2 py-2">{KIND_LABELS[r.kind]}</td>
              <td className="px-2 py-2">
                {r.source === "ingest" ? "level-2 feed" : (r.fileName ?? "upload")}
                <span className="ml-1 text-xs uppercase text-ink-500">{r.format}</span>
              </td>
              <td className="px-2 py-2 text-right tabular-nums">{r.rows}</td>
              <td className="px-2 py-2 text-right tabular-nums">{r.created}</td>
              <td className="px-2 py-2 text-right tabular-nums">{r.updated}</td>
              <td className="px-2 py-2 text-right tabular-nums">{r.unchanged}</td>
              <td className="px-2 py-2 text-right tabular-nums">{r.slabsResolved}</td>
              <td className="px-2 py-2">{r.by ?? "—"}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
