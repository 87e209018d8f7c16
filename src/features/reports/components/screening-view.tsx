import { Link } from "react-router";
import type { Screening } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { num, pct, plural, pValue } from "@/lib/format";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

export function ScreeningView({ data, linkFor }: { data: Screening; linkFor: (key: string) => string }) {
  const few = data.variables.filter((v) => v.fewSlabs).length;
  const below = data.variables.filter((v) => v.pAdjusted !== null && v.pAdjusted < 0.05).length;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure label="Slabs (n)" value={data.slabs.toLocaleString("en-GB")} />
        <Figure label="Share affected" value={pct(data.slabs ? data.affected / data.slabs : null)} note={`${data.affected.toLocaleString("en-GB")} of n = ${data.slabs.toLocaleString("en-GB")}`} />
        <Figure label="Variables screened" value={data.variables.length} note={`${data.variables.filter((v) => v.p !== null).length} tested`} />
        <Figure label="Adjusted p below 0.05" value={below} note="Benjamini–Hochberg false discovery rate 5 %" />
      </div>
      <SmallNWarning notes={[...data.notes.filter((n) => n.startsWith("Only")), few ? `${plural(few, "variable")} rest on few slabs or small expected counts (marked).` : ""]} />
      <Card title="Variables ranked by adjusted p">
        <TableWrap caption={data.notes.filter((n) => !n.startsWith("Only")).join(" ")}>
          <table className="w-full text-sm" data-testid="screening-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={thNum}>#</th>
                <th className={th}>Variable</th>
                <th className={thNum}>n</th>
                <th className={thNum}>Statistic</th>
                <th className={thNum}>p</th>
                <th className={thNum}>p adjusted (BH)</th>
                <th className={th}>Difference, affected − sound</th>
                <th className={th} />
              </tr>
            </thead>
            <tbody>
              {data.variables.map((v, i) => {
                const spec = VARIABLES.find((s) => s.key === v.key);
                const unit = spec && spec.unit !== "–" ? ` ${spec.unit}` : "";
                const d = (spec?.digits ?? 2) + 1;
                return (
                  <tr key={v.key} className={`border-b border-ink-100 align-top ${v.fewSlabs ? "bg-ink-50 text-ink-500" : ""}`} data-testid="screening-row" data-key={v.key}>
                    <td className={tdNum}>{i + 1}</td>
                    <td className={td}>
                      <span className="font-semibold">{v.label}</span>
                      {v.fewSlabs ? <FewMark /> : null}
                      <div className="text-xs text-ink-600">{v.method}</div>
                    </td>
                    <td className={tdNum} data-field="n">{v.n.toLocaleString("en-GB")}</td>
                    <td className={tdNum}>
                      {v.statistic === null ? "—" : `${v.kind === "numeric" ? "t" : "X²"} = ${num(v.statistic, 2)}`}
                      {v.df !== null ? <div className="text-xs text-ink-600">df {num(v.df, v.kind === "numeric" ? 1 : 0)}</div> : null}
                    </td>
                    <td className={tdNum} data-field="p">{pValue(v.p)}</td>
                    <td className={`${tdNum} font-semibold`} data-field="pAdjusted">{pValue(v.pAdjusted)}</td>
                    <td className={td}>
                      {v.kind === "numeric" ? (
                        <span className="tabular-nums">
                          {v.effect === null ? "—" : `${v.effect > 0 ? "+" : ""}${num(v.effect, d)}${unit}`}
                          <span className="block text-xs text-ink-600">
                            mean {num(v.meanAffected, d)} affected vs {num(v.meanSound, d)} sound
                          </span>
                        </span>
                      ) : (
                        <ul className="space-y-0.5 text-xs">
                          {v.categories?.map((c) => (
                            <li key={c.label} className={c.slabs < FEW_SLABS ? "text-ink-500" : ""}>
                              <span className="font-semibold">{c.label}</span>: {pct(c.rate)} ({c.affected} of n = {c.slabs})
                            </li>
                          ))}
                        </ul>
                      )}
                    </td>
                    <td className={td}>
                      {v.kind === "numeric" ? (
                        <Link to={linkFor(v.key)} className="whitespace-nowrap text-sm font-semibold text-strand-700 underline">
                          Rate against it
                        </Link>
                      ) : null}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </TableWrap>
      </Card>
    </div>
  );
}
