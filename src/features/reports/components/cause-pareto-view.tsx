import { lazy, Suspense } from "react";
import type { CausePareto } from "@shared/api/causes";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { pct, plural } from "@/lib/format";
import { Figure } from "./figure";
import { FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const CauseParetoChart = lazy(() => import("./charts/cause-pareto-chart"));

/** Below this many tagged defects a cause's share says little: its row is marked. */
export const FEW_DEFECTS = 10;

const n = (v: number) => v.toLocaleString("en-GB");

export function CauseParetoView({ data, minConfidence, groupName }: { data: CausePareto; minConfidence: string; groupName: (code: string) => string }) {
  const few = data.rows.filter((r) => r.defects < FEW_DEFECTS).length;
  // The server's notes speak of few tagged defects and of the untagged share; the screen adds its own marks only.
  const warnings = [
    data.defects === 0 ? "No defect passes these filters." : "",
    data.defects > 0 && data.tagged === 0 ? "None of the defects passing the filters carries a cause at this confidence." : "",
    few ? `${plural(few, "cause")} with fewer than ${FEW_DEFECTS} defects (marked).` : "",
    ...data.notes,
  ];
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="cause-pareto-summary">
        <Figure label="Defects (n)" value={<span data-testid="cp-defects">{n(data.defects)}</span>} note="live, unrejected, passing the filters" />
        <Figure
          label="With a cause"
          value={<span data-testid="cp-tagged">{n(data.tagged)}</span>}
          note={`${minConfidence === "suspected" ? "any confidence" : `${minConfidence} or surer`}`}
        />
        <Figure
          label="No cause yet"
          value={<span data-testid="cp-untagged">{n(data.untagged)}</span>}
          note={data.defects ? `${pct(data.untagged / data.defects, 1)} of n` : "—"}
        />
        <Figure label="Cause tags found" value={n(data.rows.length)} note="a defect with two causes counts under both" />
      </div>
      <SmallNWarning notes={[...new Set(warnings)]} title="Read with care" />
      <Card title={`Pareto of cause tags (${plural(data.tagged, "tagged defect")})`}>
        {data.rows.length === 0 ? (
          <p className="text-sm text-ink-600">No tagged defect passes these filters.</p>
        ) : (
          <>
            <Suspense fallback={<Spinner label="Loading the chart" />}>
              <CauseParetoChart rows={data.rows} />
            </Suspense>
            <TableWrap caption="Share and cumulative are of all taggings counted: a defect with two causes counts once under each, so the shares add up to 100 %. Slabs counts the slabs those defects sit on.">
              <table className="mt-3 w-full text-sm" data-testid="cause-pareto-table">
                <thead>
                  <tr className="border-b-2 border-ink-200">
                    <th className={th}>Cause tag</th>
                    <th className={th}>Group</th>
                    <th className={thNum}>Defects (n)</th>
                    <th className={thNum}>Slabs</th>
                    <th className={thNum}>Confirmed</th>
                    <th className={thNum}>Probable</th>
                    <th className={thNum}>Suspected</th>
                    <th className={thNum}>Share</th>
                    <th className={thNum}>Cumulative</th>
                  </tr>
                </thead>
                <tbody>
                  {data.rows.map((r) => (
                    <tr key={r.code} className="border-b border-ink-100" data-testid="cause-pareto-row" data-code={r.code}>
                      <td className={td}>
                        <span className="font-semibold" data-field="name">
                          {r.name}
                        </span>
                        <span className="ml-1 text-xs text-ink-500" data-field="code">
                          {r.code}
                        </span>
                        {r.retired ? <span className="ml-1 text-xs text-ink-600">(retired)</span> : null}
                        {r.defects < FEW_DEFECTS ? <FewMark label="few defects" /> : null}
                      </td>
                      <td className={td}>{groupName(r.group)}</td>
                      <td className={tdNum} data-field="defects">
                        {n(r.defects)}
                      </td>
                      <td className={tdNum} data-field="slabs">
                        {n(r.slabs)}
                      </td>
                      <td className={tdNum} data-field="confirmed">
                        {n(r.confirmed)}
                      </td>
                      <td className={tdNum} data-field="probable">
                        {n(r.probable)}
                      </td>
                      <td className={tdNum} data-field="suspected">
                        {n(r.suspected)}
                      </td>
                      <td className={tdNum} data-field="share">
                        {pct(r.share, 1)}
                      </td>
                      <td className={tdNum} data-field="cumulative">
                        {pct(r.cumulative, 1)}
                      </td>
                    </tr>
                  ))}
                </tbody>
                <tfoot>
                  <tr className="border-t-2 border-ink-200" data-testid="cause-pareto-untagged">
                    <td className={`${td} italic`} colSpan={2}>
                      No cause at this confidence
                    </td>
                    <td className={tdNum} data-field="untagged">
                      {n(data.untagged)}
                    </td>
                    <td colSpan={6} className={`${td} text-xs text-ink-600`}>
                      not in the shares
                    </td>
                  </tr>
                </tfoot>
              </table>
            </TableWrap>
          </>
        )}
      </Card>
      <p className="text-xs text-ink-600">
        A tag counts where a person put it; a tagging is a judgement, not a measurement. “Confirmed” means the tagger saw evidence — still not proof that the
        tag's condition caused the defect.
      </p>
    </div>
  );
}
