import { lazy, Suspense } from "react";
import type { ControlChart } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { pct, plural } from "@/lib/format";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const PChart = lazy(() => import("./charts/p-chart"));

function OutMark({ above }: { above: boolean }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-alarm-700" data-out="true">
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden style={{ transform: above ? undefined : "rotate(180deg)" }}>
        <path d="M6 1 11.5 11H.5z" fill="currentColor" />
      </svg>
      {above ? "above UCL" : "below LCL"}
    </span>
  );
}

export function ControlChartView({ data }: { data: ControlChart }) {
  const out = data.points.filter((p) => p.outOfControl);
  const few = data.points.filter((p) => p.slabs < FEW_SLABS).length;
  const word = data.period === "day" ? "day" : "week";
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure label="Slabs (n)" value={data.slabs.toLocaleString("en-GB")} note={`in ${plural(data.points.length, word)}`} />
        <Figure label="p̄ (centre line)" value={pct(data.pBar)} note={`${data.affected.toLocaleString("en-GB")} affected of n = ${data.slabs.toLocaleString("en-GB")}`} />
        <Figure label="Out of control" value={<span data-testid="out-count">{out.length}</span>} note={`${out.filter((p) => p.p > p.ucl).length} above UCL, ${out.filter((p) => p.p < p.lcl).length} below LCL`} />
        <Figure label={`${word[0]!.toUpperCase()}${word.slice(1)}s under ${FEW_SLABS} slabs`} value={few} note="their limits are wide" />
      </div>
      <SmallNWarning
        notes={[
          data.slabs > 0 && data.affected < 10 ? `Only ${plural(data.affected, "affected slab")} in these filters: the limits are wide and an out-of-control period is hard to show.` : "",
          few ? `${plural(few, word)} with fewer than ${FEW_SLABS} slabs: the 3σ limits of the normal approximation are rough there.` : "",
        ]}
      />
      <Card title={`p-chart by ${word}`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <PChart data={data} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          {data.method}. A point outside its limits is marked with a triangle and says which limit it crossed. An out-of-control {word} asks for
          a look at what was cast then; it does not say why.
        </p>
      </Card>
      <Card title={`${out.length ? `${plural(out.length, word)} out of control` : `Every ${word}`}`}>
        <div className="max-h-[28rem] overflow-y-auto">
          <TableWrap>
            <table className="w-full text-sm" data-testid="pchart-table">
              <thead className="sticky top-0 bg-white">
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{word === "day" ? "Day" : "ISO week"}</th>
                  <th className={thNum}>Slabs (n)</th>
                  <th className={thNum}>Affected</th>
                  <th className={thNum}>p</th>
                  <th className={thNum}>LCL</th>
                  <th className={thNum}>UCL</th>
                  <th className={th}>Signal</th>
                </tr>
              </thead>
              <tbody>
                {(out.length ? [...out, ...data.points.filter((p) => !p.outOfControl)] : data.points).map((p) => (
                  <tr key={p.period} className={`border-b border-ink-100 ${p.slabs < FEW_SLABS ? "bg-ink-50 text-ink-500" : ""}`} data-testid="pchart-row">
                    <td className={`${td} whitespace-nowrap font-semibold`}>
                      {p.period}
                      {p.slabs < FEW_SLABS ? <FewMark /> : null}
                    </td>
                    <td className={tdNum}>{p.slabs.toLocaleString("en-GB")}</td>
                    <td className={tdNum}>{p.affected.toLocaleString("en-GB")}</td>
                    <td className={tdNum}>{pct(p.p)}</td>
                    <td className={tdNum}>{pct(p.lcl)}</td>
                    <td className={tdNum}>{pct(p.ucl)}</td>
                    <td className={td}>{p.outOfControl ? <OutMark above={p.p > p.ucl} /> : <span className="text-xs text-ink-500">within limits</span>}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableWrap>
        </div>
        {out.length ? <p className="mt-2 text-xs text-ink-600">Out-of-control {word}s first, then the rest in order.</p> : null}
      </Card>
    </div>
  );
}
