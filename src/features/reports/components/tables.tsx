import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
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
  const { t } = useTranslation("reports");
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
            <th className={thNum}>{t("cols.slabsN")}</th>
            <th className={thNum}>{t("cols.affected")}</th>
            <th className={thNum}>{t("cols.shareAffected")}</th>
            <th className={thNum}>{t("cols.ciWilson")}</th>
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

/**
 * A row's text from a template looked up once per table (`t(key)` without values keeps its
 * {{placeholders}}), filled here for each row: no catalogue lookup per row while a table is drawn.
 */
export const fill = (template: string, values: Record<string, string | number>) =>
  template.replace(/\{\{(\w+)\}\}/g, (m, k: string) => (k in values ? String(values[k]) : m));

/** A bin of a variable: "1.09–1.40". */
export const binLabel = (lo: number, hi: number, digits: number) => `${num(lo, digits)}–${num(hi, digits)}`;
