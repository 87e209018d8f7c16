import { useQuery } from "@tanstack/react-query";
import { Card, Stat } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { plantKeys } from "../api/plant.queries";

const day = (iso: string | null) => (iso ? new Date(iso).toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" }) : "—");
const pct = (a: number, n: number) => (n > 0 ? `${((100 * a) / n).toFixed(1)} %` : "—");

/** The last 30 days on record: slabs, affected share with its n, defects, the queue, top types. */
export function SummaryPanel() {
  const summary = useQuery(plantKeys.summary());
  if (summary.isPending) return <Spinner />;
  if (summary.isError) return <Notice tone="error">{summary.error.message}</Notice>;
  const { recent, totals } = summary.data;
  return (
    <Card title={`Last 30 days on record (${day(recent.from)} – ${day(recent.to)})`}>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Stat label="Slabs cast" value={recent.slabs.toLocaleString("en-GB")} />
        <Stat label="Slabs with a defect" value={pct(recent.affectedSlabs, recent.slabs)} note={`${recent.affectedSlabs} of n = ${recent.slabs}`} />
        <Stat label="Defects logged" value={recent.defects.toLocaleString("en-GB")} />
        <Stat label="Awaiting review" value={recent.awaitingReview} />
      </div>
      <h3 className="mt-5 text-sm font-semibold text-ink-800">Most frequent defect types</h3>
      <table className="mt-2 w-full text-sm">
        <thead>
          <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2">Type</th>
            <th className="py-2 text-right">Defects</th>
            <th className="py-2 text-right">per 100 slabs</th>
          </tr>
        </thead>
        <tbody>
          {recent.topTypes.map((t) => (
            <tr key={t.code} className="border-b border-ink-100">
              <td className="py-2">
                <span className="font-semibold">{t.code}</span> {t.name}
              </td>
              <td className="py-2 text-right tabular-nums">{t.defects}</td>
              <td className="py-2 text-right tabular-nums">{recent.slabs ? ((100 * t.defects) / recent.slabs).toFixed(2) : "—"}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-3 text-xs text-ink-600">
        On record in total: {totals.heats.toLocaleString("en-GB")} heats, {totals.slabs.toLocaleString("en-GB")} slabs, {totals.defects.toLocaleString("en-GB")}{" "}
        defects (rejected entries excluded).
      </p>
    </Card>
  );
}
