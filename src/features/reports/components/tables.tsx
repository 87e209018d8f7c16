import type { ReactNode } from "react";
import { count, num, pct, pctRange } from "@/lib/format";
import type { RateRow } from "./charts/category-rate-chart";
import { FewMark } from "./small-n";

export const th = "px-2 py-2 text-left text-xs font-semibold text-ink-700";
export const thNum = `${th} text-right whitespace-nowrap`;
export const td = "px-2 py-1.5";
export const tdNum = "px-2 py-1.5 text-right tabular-nums whitespace-nowrap";

/** A table that scrolls sideways on a narrow screen instead of squeezing its numbers. */
export function TableWrap({ children, caption }: { children: ReactNode; caption?: ReactNode }) {
  return (
    <div className="space-y-2">
      <div className="overflow-x-auto">{children}</div>
      {caption ? <p className="text-xs text-ink-600">{caption}</p> : null}
    </div>
  );
}

/** Rates of named groups with n, affected, the rate and its Wilson interval; rows with few slabs greyed and marked. */
export function RateTable({
  rows,
  labelHeader,
  fewN,
  testId,
  extra,
}: {
  rows: (RateRow & { key: string })[];
  labelHeader: ReactNode;
  fewN: number;
  testId: string;
  extra?: { header: string; cell: (i: number) => ReactNode }[];
}) {
  return (
    <TableWrap>
      <table className="w-full text-sm" data-testid={testId}>
        <thead>
          <tr className="border-b-2 border-ink-200">
            <th className={th}>{labelHeader}</th>
            {extra?.map((e) => (
              <th key={e.header} className={th}>
                {e.header}
              </th>
            ))}
            <th className={thNum}>Slabs (n)</th>
            <th className={thNum}>Affected</th>
            <th className={thNum}>Share affected</th>
            <th className={thNum}>95 % CI (Wilson)</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r, i) => {
            const few = r.slabs < fewN;
            return (
              <tr key={r.key} className={`border-b border-ink-100 ${few ? "bg-ink-50 text-ink-500" : ""}`} data-testid={`${testId}-row`}>
                <td className={`${td} font-semibold`} data-field="label">
                  {r.label}
                  {few ? <FewMark /> : null}
                </td>
                {extra?.map((e) => (
                  <td key={e.header} className={td}>
                    {e.cell(i)}
                  </td>
                ))}
                <td className={tdNum} data-field="slabs">
                  {count(r.slabs)}
                </td>
                <td className={tdNum} data-field="affected">
                  {count(r.affected)}
                </td>
                <td className={tdNum} data-field="rate">
                  {pct(r.rate)}
                </td>
                <td className={tdNum} data-field="ci">
                  {pctRange(r.ciLower, r.ciUpper)}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </TableWrap>
  );
}

/** A bin of a variable: "1.09–1.40". */
export const binLabel = (lo: number, hi: number, digits: number) => `${num(lo, digits)}–${num(hi, digits)}`;
