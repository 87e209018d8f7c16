import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { SMALL_AFFECTED, type Screening } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { useLevelName } from "@/i18n/levels";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { count, num, pct, pValue, sig } from "@/lib/format";
import { ratioRange, SeChoice } from "./estimates";
import { inSentence, joinList, listOf, type ReportParams } from "./report-params";
import { SettingsRow } from "./settings";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { fill, TableWrap, td, tdNum, th, thNum } from "./tables";
import { TermPick } from "./term-pick";

/** What every variable's adjusted test is adjusted for (grade family unless changed; none for crude only), and the SEs. */
export function ScreeningSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Partial<Record<string, string | undefined>>) => void }) {
  const { t } = useTranslation("reports");
  const adjust = listOf(params.adjustFor).filter((k) => k !== "none");
  return (
    <SettingsRow>
      <div className="col-span-2">
        <TermPick
          label={t("screening.adjustEvery")}
          testId="adjust-pick"
          value={adjust}
          emptyLabel={t("rbv.nothingCrude")}
          hint={t("screening.adjustHint")}
          onChange={(keys) => onChange({ adjustFor: keys.length ? joinList(keys) : "none" })}
        />
      </div>
      {adjust.length ? <SeChoice value={params.se ?? "cluster"} onChange={(v) => onChange({ se: v })} /> : null}
    </SettingsRow>
  );
}

/** The methods the server names (welch, chiSquare, crude, adjusted, multiplicity, grouping); another key shows as it comes. */
const METHOD_KEYS = new Set(["welch", "chiSquare", "crude", "adjusted", "multiplicity", "grouping"]);

export function ScreeningView({ data, linkFor }: { data: Screening; linkFor: (key: string) => string }) {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
  const levelName = useLevelName();
  // The rows' names and words, looked up once per answer and language, not per row.
  const labels = useMemo(() => new Map(data.variables.map((v) => [v.key, variable(v.key)])), [data.variables, variable]);
  const labelOf = (key: string) => labels.get(key) ?? (VARIABLES.some((v) => v.key === key) ? variable(key) : key);
  const w = {
    notTestable: t("screening.notTestable"),
    derivedFrom: t("screening.derivedFrom"),
    tTest: t("screening.tTest"),
    chiTest: t("screening.chiTest"),
    df: t("screening.df"),
    means: t("screening.means"),
    ofN: t("screening.ofN"),
    adjustedReason: t("screening.adjustedReason"),
    adjustmentAlone: t("screening.adjustmentAlone"),
    adjustmentPart: t("screening.adjustmentPart"),
    rateAgainst: t("screening.rateAgainst"),
  };
  const adjusted = data.adjustFor.length > 0;
  const few = data.variables.filter((v) => v.fewSlabs).length;
  // The server says "only N affected slabs" as its last note under SMALL_AFFECTED, in the reader's language.
  const fewNote = data.affected < SMALL_AFFECTED ? data.notes[data.notes.length - 1] : undefined;
  const below = adjusted
    ? data.variables.filter((v) => v.adjusted?.pAdjusted !== null && v.adjusted?.pAdjusted !== undefined && v.adjusted.pAdjusted < 0.05).length
    : data.variables.filter((v) => v.pAdjusted !== null && v.pAdjusted < 0.05).length;
  const adjustWords = data.adjustFor.map((term) => inSentence(variable(term.key))).join(", ");
  // A rank for each raw condition tested; a derived value sits under the raw condition it comes from, without a rank of its own.
  let rank = 0;
  const ranks = data.variables.map((v) => (v.parent || !v.testable ? null : ++rank));
  const cols = adjusted ? 11 : 8;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure label={t("cols.slabsN")} value={count(data.slabs)} />
        <Figure
          label={t("cols.shareAffected")}
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={t("screening.affectedOfN", { affected: count(data.affected), n: count(data.slabs) })}
        />
        <Figure
          label={t("screening.adjustedFor")}
          value={
            <span data-testid="screening-adjusted-for">{adjusted ? data.adjustFor.map((term) => variable(term.key)).join(", ") : t("screening.nothing")}</span>
          }
          note={adjusted ? t(`screening.seNote.${data.seMethod}`, { n: data.tests.adjusted }) : t("screening.crudeNote", { n: data.tests.crude })}
        />
        <Figure label={adjusted ? t("screening.belowAdjusted") : t("screening.belowCrude")} value={below} note={t("screening.fdr")} />
      </div>
      <SmallNWarning notes={[...(fewNote ? [fewNote] : []), few ? t("screening.few", { count: few, n: count(few) }) : ""]} />
      <Card title={adjusted ? t("screening.rankedAdjusted", { terms: adjustWords }) : t("screening.rankedCrude")} bodyClassName="p-2 sm:p-4">
        <TableWrap caption={data.notes.filter((n) => n !== fewNote).join(" ")}>
          <table className="w-full text-sm" data-testid="screening-table">
            <thead>
              <tr className="border-b border-ink-200">
                <th colSpan={4} />
                <th colSpan={2} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  {t("screening.crudeHead")}
                </th>
                {adjusted ? (
                  <th colSpan={3} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-900">
                    {t("rateAdjusted.adjusted", { terms: adjustWords })}
                  </th>
                ) : null}
                <th colSpan={2} />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={thNum}>#</th>
                <th className={th}>{t("rbv.variable")}</th>
                <th className={thNum}>{t("rbv.n")}</th>
                <th className={thNum}>{t("screening.iqr")}</th>
                <th className={thNum}>{t("screening.orPerIqr")}</th>
                <th className={thNum}>{t("screening.pBh")}</th>
                {adjusted ? (
                  <>
                    <th className={`${thNum} border-l-2 border-ink-200`}>{t("screening.orPerIqr")}</th>
                    <th className={thNum}>{t("cols.p")}</th>
                    <th className={thNum}>{t("screening.pBh")}</th>
                  </>
                ) : null}
                <th className={th}>{t("screening.difference")}</th>
                <th className={th} />
              </tr>
            </thead>
            <tbody>
              {data.variables.map((v, i) => {
                const spec = VARIABLES.find((s) => s.key === v.key);
                const unit = spec && spec.unit !== "–" ? ` ${spec.unit}` : "";
                const d = (spec?.digits ?? 2) + 1;
                const derived = Boolean(v.parent);
                const label = (
                  <>
                    {derived ? (
                      <span aria-hidden className="mr-1 text-ink-500">
                        ↳
                      </span>
                    ) : null}
                    <span className="font-semibold" data-field="label">
                      {labels.get(v.key) ?? v.label}
                    </span>
                    {v.fewSlabs && v.testable ? <FewMark /> : null}
                    {!v.testable ? <FewMark label={w.notTestable} /> : null}
                  </>
                );
                if (!v.testable) {
                  // Nothing to test (no spread, no value, one category): one compact row saying why, not counted in BH.
                  return (
                    <tr
                      key={v.key}
                      className="border-b border-ink-100 align-top text-ink-500"
                      data-testid="screening-row"
                      data-key={v.key}
                      data-testable="false"
                    >
                      <td className={tdNum} data-field="rank" />
                      <td className={`${td} ${derived ? "pl-6" : ""}`}>{label}</td>
                      <td className={tdNum} data-field="n">
                        {count(v.n)}
                      </td>
                      <td colSpan={cols - 3} className={`${td} text-xs`} data-field="reason">
                        {v.reason ?? w.notTestable}
                      </td>
                    </tr>
                  );
                }
                return (
                  <tr
                    key={v.key}
                    className={`border-b align-top ${derived ? "border-ink-50 bg-ink-50/40" : "border-ink-100"} ${v.fewSlabs ? "text-ink-500" : ""}`}
                    data-testid="screening-row"
                    data-key={v.key}
                    data-parent={v.parent ?? undefined}
                  >
                    <td className={tdNum} data-field="rank">
                      {ranks[i] ?? ""}
                    </td>
                    <td className={`${td} min-w-44 ${derived ? "pl-6" : ""}`}>
                      {label}
                      {derived ? (
                        <div className="text-xs text-ink-600" data-field="derived">
                          {fill(w.derivedFrom, { list: v.derivedFrom.map((k) => inSentence(labelOf(k))).join(", ") })}
                        </div>
                      ) : null}
                      {v.kind === "categorical" ? <div className="text-xs text-ink-600">{v.method}</div> : null}
                    </td>
                    <td className={tdNum} data-field="n">
                      {count(v.n)}
                    </td>
                    <td className={tdNum} data-field="iqr">
                      {v.iqr === null ? "—" : `${num(v.iqr, d)}${unit}`}
                    </td>
                    <td className={tdNum}>
                      <span data-field="crudeOr">{sig(v.crude?.oddsRatioPerIqr, 3)}</span>
                      <div className="text-xs text-ink-600" data-field="crudeCi">
                        {v.crude ? ratioRange(v.crude.ciLower, v.crude.ciUpper) : ""}
                      </div>
                    </td>
                    <td className={tdNum}>
                      <span className={adjusted ? "" : "font-semibold"} data-field="pAdjusted">
                        {pValue(v.pAdjusted)}
                      </span>
                      <div className="text-xs text-ink-600">
                        {v.kind === "numeric" ? w.tTest : w.chiTest} <span data-field="p">{pValue(v.p)}</span>
                      </div>
                    </td>
                    {adjusted ? (
                      <>
                        <td className={`${tdNum} border-l-2 border-ink-200`}>
                          <span className="font-semibold" data-field="adjustedOr">
                            {sig(v.adjusted?.oddsRatioPerIqr, 3)}
                          </span>
                          <div className="text-xs text-ink-600" data-field="adjustedCi">
                            {v.adjusted && v.adjusted.oddsRatioPerIqr !== null ? ratioRange(v.adjusted.ciLower, v.adjusted.ciUpper) : ""}
                          </div>
                          {/* A term of the adjustment cannot be adjusted for itself: said where its adjusted figures stand. */}
                          {data.adjustFor.some((term) => term.key === v.key) ? (
                            <div className="text-xs font-semibold text-ink-700" data-field="adjustedWithin">
                              {data.adjustFor.length === 1 ? w.adjustmentAlone : w.adjustmentPart}
                            </div>
                          ) : null}
                          {v.adjusted && v.kind === "categorical" && v.adjusted.statistic !== null ? (
                            <div className="text-xs text-ink-600">
                              X² = {num(v.adjusted.statistic, 2)}
                              {v.adjusted.df !== null ? fill(w.df, { df: v.adjusted.df }) : ""}
                            </div>
                          ) : null}
                        </td>
                        <td className={tdNum} data-field="adjustedP">
                          {pValue(v.adjusted?.p)}
                        </td>
                        <td className={`${tdNum} font-semibold`} data-field="adjustedPAdjusted">
                          {pValue(v.adjusted?.pAdjusted)}
                        </td>
                      </>
                    ) : null}
                    <td className={`${td} min-w-40 text-xs`}>
                      {v.kind === "numeric" ? (
                        <span className="tabular-nums">
                          <span className="text-sm">
                            {v.effect === null ? "—" : `${v.effect > 0 ? "+" : v.effect < 0 ? "−" : ""}${num(Math.abs(v.effect), d)}${unit}`}
                          </span>
                          <span className="block text-ink-600">{fill(w.means, { affected: num(v.meanAffected, d), sound: num(v.meanSound, d) })}</span>
                        </span>
                      ) : (
                        <ul className="space-y-0.5">
                          {v.categories?.map((c) => (
                            <li key={c.label} className={c.slabs < FEW_SLABS ? "text-ink-500" : ""}>
                              <span className="font-semibold">{levelName(c.label)}</span>: {pct(c.rate)}{" "}
                              {fill(w.ofN, { affected: c.affected, n: count(c.slabs) })}
                            </li>
                          ))}
                        </ul>
                      )}
                      {v.adjusted?.reason ? <div className="mt-1 text-ink-700">{fill(w.adjustedReason, { reason: v.adjusted.reason })}</div> : null}
                    </td>
                    <td className={td}>
                      {v.kind === "numeric" ? (
                        <Link
                          to={linkFor(v.key)}
                          className="inline-flex min-h-11 items-center whitespace-nowrap text-sm font-semibold text-strand-700 underline"
                        >
                          {w.rateAgainst}
                        </Link>
                      ) : null}
                    </td>
                  </tr>
                );
              })}
              {data.variables.length === 0 ? (
                <tr>
                  <td colSpan={cols} className={td}>
                    {t("screening.noVariable")}
                  </td>
                </tr>
              ) : null}
            </tbody>
          </table>
        </TableWrap>
        <details className="mt-3 text-xs text-ink-700">
          <summary className="min-h-8 cursor-pointer font-semibold">{t("screening.methodsTitle")}</summary>
          <dl className="mt-2 space-y-1">
            {Object.entries(data.methods).map(([k, m]) => (
              <div key={k}>
                <dt className="inline font-semibold">{METHOD_KEYS.has(k) ? t(`screening.methods.${k}`) : k}: </dt>
                <dd className="inline">{m}</dd>
              </div>
            ))}
          </dl>
        </details>
      </Card>
    </div>
  );
}
