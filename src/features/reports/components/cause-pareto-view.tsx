import { lazy, Suspense } from "react";
import { useTranslation } from "react-i18next";
import type { CausePareto } from "@shared/api/causes";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { count, pct } from "@/lib/format";
import { Figure } from "./figure";
import { FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const CauseParetoChart = lazy(() => import("./charts/cause-pareto-chart"));

/** Below this many tagged defects a cause's share says little: its row is marked. */
export const FEW_DEFECTS = 10;

const n = count;

export function CauseParetoView({ data, minConfidence, groupName }: { data: CausePareto; minConfidence: string; groupName: (code: string) => string }) {
  const { t } = useTranslation("reports");
  // Looked up once per table, not per row.
  const retired = t("causePareto.retired");
  const fewDefects = t("causePareto.fewDefects");
  const few = data.rows.filter((r) => r.defects < FEW_DEFECTS).length;
  // The server's notes speak of few tagged defects and of the untagged share; the screen adds its own marks only.
  const warnings = [
    data.defects === 0 ? t("overview.noDefect") : "",
    data.defects > 0 && data.tagged === 0 ? t("causePareto.noneTagged") : "",
    few ? t("causePareto.few", { count: few, n: count(few), min: FEW_DEFECTS }) : "",
    ...data.notes,
  ];
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="cause-pareto-summary">
        <Figure label={t("causePareto.defectsN")} value={<span data-testid="cp-defects">{n(data.defects)}</span>} note={t("causePareto.live")} />
        <Figure
          label={t("causePareto.withCause")}
          value={<span data-testid="cp-tagged">{n(data.tagged)}</span>}
          note={
            minConfidence === "suspected"
              ? t("causePareto.anyConfidence")
              : t("causePareto.orSurer", { level: t(`describe.confidence.${minConfidence}`, { defaultValue: minConfidence }) })
          }
        />
        <Figure
          label={t("causePareto.noCauseYet")}
          value={<span data-testid="cp-untagged">{n(data.untagged)}</span>}
          note={data.defects ? t("causePareto.ofN", { share: pct(data.untagged / data.defects, 1) }) : "—"}
        />
        <Figure label={t("causePareto.tagsFound")} value={n(data.rows.length)} note={t("causePareto.twoCauses")} />
      </div>
      <SmallNWarning notes={[...new Set(warnings)]} title={t("causePareto.readWithCare")} />
      <Card title={t("causePareto.title", { count: data.tagged, n: count(data.tagged) })}>
        {data.rows.length === 0 ? (
          <p className="text-sm text-ink-600">{t("causePareto.noTagged")}</p>
        ) : (
          <>
            <Suspense fallback={<Spinner label={t("charts.loading")} />}>
              <CauseParetoChart rows={data.rows} />
            </Suspense>
            <TableWrap caption={t("causePareto.caption")}>
              <table className="mt-3 w-full text-sm" data-testid="cause-pareto-table">
                <thead>
                  <tr className="border-b-2 border-ink-200">
                    <th className={th}>{t("filters.cause")}</th>
                    <th className={th}>{t("causePareto.group")}</th>
                    <th className={thNum}>{t("causePareto.defectsN")}</th>
                    <th className={thNum}>{t("rbv.slabs")}</th>
                    <th className={thNum}>{t("causePareto.confirmed")}</th>
                    <th className={thNum}>{t("causePareto.probable")}</th>
                    <th className={thNum}>{t("causePareto.suspected")}</th>
                    <th className={thNum}>{t("overview.share")}</th>
                    <th className={thNum}>{t("overview.cumulative")}</th>
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
                        {r.retired ? <span className="ml-1 text-xs text-ink-600">{retired}</span> : null}
                        {r.defects < FEW_DEFECTS ? <FewMark label={fewDefects} /> : null}
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
                      {t("causePareto.noCauseHere")}
                    </td>
                    <td className={tdNum} data-field="untagged">
                      {n(data.untagged)}
                    </td>
                    <td colSpan={6} className={`${td} text-xs text-ink-600`}>
                      {t("causePareto.notInShares")}
                    </td>
                  </tr>
                </tfoot>
              </table>
            </TableWrap>
          </>
        )}
      </Card>
      <p className="text-xs text-ink-600">{t("causePareto.judgement")}</p>
    </div>
  );
}
