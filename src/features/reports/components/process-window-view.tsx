import { lazy, Suspense } from "react";
import { useTranslation } from "react-i18next";
import type { ProcessWindow } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { useTerms } from "@/i18n/terms";
import { count, pct, pctRange } from "@/lib/format";
import { inSentence } from "./report-params";
import { FewMark, SmallNWarning } from "./small-n";
import { binLabel, fill, TableWrap, tdNum, th, thNum } from "./tables";

const WindowHeatmap = lazy(() => import("./charts/window-heatmap"));

export function ProcessWindowView({ data, xDigits, yDigits }: { data: ProcessWindow; xDigits: number; yDigits: number }) {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
  const xLabel = variable(data.x.key);
  const yLabel = variable(data.y.key);
  // Looked up once per table, filled per cell.
  const ofN = t("screening.affectedOfN");
  const tooFew = t("window.tooFew");
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
        <Figure label={t("window.slabsBoth")} value={count(data.slabs)} />
        <Figure
          label={t("cols.shareAffected")}
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={t("screening.affectedOfN", { affected: count(data.affected), n: count(data.slabs) })}
        />
        <Figure label={t("window.cells")} value={data.cells.length} note={`${data.x.edges.length - 1} × ${data.y.edges.length - 1}`} />
        <Figure label={t("window.cellsUnder", { n: data.minN })} value={sparse} note={t("window.greyed")} />
      </div>
      <SmallNWarning
        notes={[
          data.slabs > 0 && data.affected < 10 ? t("window.fewAffected", { count: data.affected, n: count(data.affected) }) : "",
          sparse ? t("window.sparse", { count: sparse, n: count(sparse), minN: data.minN }) : "",
        ]}
      />
      <Card title={t("window.title", { x: inSentence(xLabel), y: inSentence(yLabel) })}>
        <Suspense fallback={<Spinner label={t("charts.loading")} />}>
          <WindowHeatmap data={data} xDigits={xDigits} yDigits={yDigits} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">{t("window.explain")}</p>
      </Card>
      <Card title={t("window.grid")}>
        <TableWrap caption={t("window.gridCaption", { n: data.minN })}>
          <table className="w-full text-sm" data-testid="cells-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={`${th} min-w-36`}>
                  <div>
                    {xLabel}
                    {u(data.x.unit)} →
                  </div>
                  <div>
                    ↓ {yLabel}
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
                        <div className="text-xs">{fill(ofN, { affected: c.affected, n: count(c.slabs) })}</div>
                        <div className="text-xs text-ink-600">{pctRange(c.ciLower, c.ciUpper)}</div>
                        {c.sparse ? <FewMark label={tooFew} /> : null}
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
