import { lazy, Suspense } from "react";
import type { ProcessWindow } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { lowerFirst, pct, pctRange, plural } from "@/lib/format";
import { FewMark, SmallNWarning } from "./small-n";
import { binLabel, TableWrap, tdNum, th, thNum } from "./tables";

const WindowHeatmap = lazy(() => import("./charts/window-heatmap"));

export function ProcessWindowView({ data, xDigits, yDigits }: { data: ProcessWindow; xDigits: number; yDigits: number }) {
  const sparse = data.cells.filter((c) => c.sparse).length;
  const u = (unit: string) => (unit === "–" ? "" : ` (${unit})`);
  const bins = (edges: number[]) =>
    edges.length > 1 ? edges.slice(0, -1).map((lo, i) => ({ i, lo, hi: edges[i + 1]! })) : [{ i: 0, lo: edges[0] ?? NaN, hi: edges[0] ?? NaN }];
  const xBins = bins(data.x.edges);
  // Highest bin on top, as on the chart.
  const yBins = bins(data.y.edges).reverse();
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure label="Slabs with both values (n)" value={data.slabs.toLocaleString("en-GB")} />
        <Figure
          label="Share affected"
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={`${data.affected.toLocaleString("en-GB")} of n = ${data.slabs.toLocaleString("en-GB")}`}
        />
        <Figure label="Cells" value={data.cells.length} note={`${data.x.edges.length - 1} × ${data.y.edges.length - 1}`} />
        <Figure label={`Cells under ${data.minN} slabs`} value={sparse} note="greyed, not to be read" />
      </div>
      <SmallNWarning
        notes={[
          data.slabs > 0 && data.affected < 10 ? `Only ${plural(data.affected, "affected slab")} in these filters.` : "",
          sparse ? `${plural(sparse, "cell")} hold fewer than ${data.minN} slabs: they are greyed and hatched, and their rates are not to be read.` : "",
        ]}
      />
      <Card title={`Share of slabs affected over ${lowerFirst(data.x.label)} and ${lowerFirst(data.y.label)}`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <WindowHeatmap data={data} xDigits={xDigits} yDigits={yDigits} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          Each cell: the share of its slabs affected (bold) and its number of slabs n. Two conditions that move together (a plant runs some grades faster, with
          more brake) fill the diagonal and leave the corners thin; a corner's rate says little.
        </p>
      </Card>
      <Card title="The grid in numbers">
        <TableWrap
          caption={`Each cell: share of slabs affected, affected of n, and the Wilson 95 % interval. Cells under ${data.minN} slabs are greyed and marked.`}
        >
          <table className="w-full text-sm" data-testid="cells-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={`${th} min-w-36`}>
                  <div>
                    {data.x.label}
                    {u(data.x.unit)} →
                  </div>
                  <div>
                    ↓ {data.y.label}
                    {u(data.y.unit)}
                  </div>
                </th>
                {xBins.map((x) => (
                  <th key={x.i} className={thNum}>
                    {binLabel(x.lo, x.hi, xDigits)}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {yBins.map((y) => (
                <tr key={y.i} className="border-b border-ink-100 align-top">
                  <th scope="row" className={`${th} whitespace-nowrap tabular-nums`}>
                    {binLabel(y.lo, y.hi, yDigits)}
                  </th>
                  {xBins.map((x) => {
                    const c = data.cells.find((k) => k.xi === x.i && k.yi === y.i);
                    if (!c)
                      return (
                        <td key={x.i} className={tdNum}>
                          —
                        </td>
                      );
                    return (
                      <td key={x.i} className={`${tdNum} ${c.sparse ? "bg-ink-50 text-ink-500" : ""}`} data-testid="cell" data-sparse={c.sparse || undefined}>
                        <div className="font-semibold">{pct(c.rate)}</div>
                        <div className="text-xs">
                          {c.affected} of n = {c.slabs.toLocaleString("en-GB")}
                        </div>
                        <div className="text-xs text-ink-600">{pctRange(c.ciLower, c.ciUpper)}</div>
                        {c.sparse ? <FewMark label="too few" /> : null}
                      </td>
                    );
                  })}
                </tr>
              ))}
            </tbody>
          </table>
        </TableWrap>
      </Card>
    </div>
  );
}
