import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { BeforeAfter } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { useLevelName } from "@/i18n/levels";
import { count, lowerFirst, num, pct, pValue, sig } from "@/lib/format";
import { ChangeSentence, points, ratioRange } from "./estimates";
import { Figure } from "./figure";
import { FEW_SLABS, FewMark } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

type Stratified = NonNullable<BeforeAfter["stratified"]>;

/** What a Breslow–Day p says, in words: a small p means the strata disagree. */
function breslowDayWords(t: TFunction<"analysis">, bd: Stratified["breslowDay"], key: string, by: string): string {
  if (bd.p === null) return bd.reason ?? t("strata.notTestableHere");
  const many = t(`strata.plurals.${key}`, { defaultValue: t("strata.levels", { by }) });
  return bd.p < 0.05 ? t("strata.bdDisagree", { many }) : t("strata.bdAgree", { many });
}

/**
 * A against B within each level of one grouping (grade family first): per-stratum rates, differences
 * and odds ratios, the Mantel–Haenszel odds ratio with the CMH test, Breslow–Day, and the difference
 * of directly standardised rates with its reference mix.
 */
export function BeforeAfterStrata({ stratified: st }: { stratified: Stratified }) {
  const { t, i18n } = useTranslation("analysis");
  const levelName = useLevelName();
  // English writes a label inside a sentence in small letters; German keeps its nouns' capitals.
  const by = i18n.language === "de" ? st.by.label : lowerFirst(st.by.label);
  const mh = st.mantelHaenszel;
  const bd = st.breslowDay;
  const sd = st.standardised;
  const withNotes = st.strata.some((s) => s.reason || s.zeroCellCorrection);
  const zeroCellWords = t("strata.zeroCell");
  return (
    <Card title={t("strata.title", { by })}>
      <div className="space-y-4" data-testid="before-after-strata">
        {st.changeInEstimate.sentence ? <ChangeSentence>{st.changeInEstimate.sentence}</ChangeSentence> : null}
        <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
          <Figure
            label={t("strata.crudeOr")}
            value={<span data-testid="crude-or">{sig(st.crude.oddsRatio, 3)}</span>}
            note={
              <Trans
                t={t}
                i18nKey="strata.crudeNote"
                values={{ ci: ratioRange(st.crude.ciLower, st.crude.ciUpper), by }}
                components={{ 1: <span data-testid="crude-ci" /> }}
              />
            }
          />
          <Figure
            label={t("strata.mhOr")}
            value={<span data-testid="mh-or">{sig(mh.oddsRatio, 3)}</span>}
            note={
              mh.reason ?? (
                <Trans
                  t={t}
                  i18nKey="strata.mhNote"
                  values={{ ci: ratioRange(mh.ciLower, mh.ciUpper), p: pValue(mh.p), by }}
                  components={{ 1: <span data-testid="mh-ci" />, 2: <span data-testid="mh-p" /> }}
                />
              )
            }
          />
          <Figure
            label={t("strata.bdLabel")}
            value={<span data-testid="bd-p">{bd.p === null ? "—" : `p ${pValue(bd.p)}`}</span>}
            note={
              bd.p === null
                ? (bd.reason ?? t("strata.notTestable"))
                : t(bd.tarone ? "strata.bdStatsTarone" : "strata.bdStats", { chi2: num(bd.chi2, 2), df: num(bd.df, 0) })
            }
          />
          <Figure
            label={t("strata.stdDifference")}
            value={<span data-testid="std-diff">{points(sd.difference, true)}</span>}
            note={sd.reason ?? t("beforeAfter.pointsCi", { lower: points(sd.ciLower), upper: points(sd.ciUpper) })}
          />
        </div>
        <p className="text-sm text-ink-800" data-testid="bd-words">
          <span className="font-semibold">{t("strata.bdHeading")}</span> {breslowDayWords(t, bd, st.by.key, by)}
        </p>
        <p className="text-sm text-ink-800" data-testid="std-words">
          <span className="font-semibold">{t("strata.stdHeading")}</span>{" "}
          {t("strata.stdWords", {
            a: pct(sd.rateA),
            b: pct(sd.rateB),
            reference: sd.reference,
            mix: sd.referenceMix.map((m) => `${levelName(m.label)} ${pct(m.share, 1)} (n = ${count(m.slabs)})`).join(", "),
          })}
          {sd.leftOut.length
            ? ` ${t("strata.leftOut", {
                list: sd.leftOut.map((l) => t("strata.leftOutItem", { label: levelName(l.label), n: count(l.slabs), group: l.group })).join(", "),
              })}`
            : ""}
        </p>
        <TableWrap caption={t("strata.caption", { reading: st.methods.reading ?? t("strata.reference") })}>
          <table className="w-full text-sm" data-testid="strata-table">
            <thead>
              <tr className="border-b border-ink-200">
                <th />
                <th colSpan={3} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  {t("beforeAfter.a")}
                </th>
                <th colSpan={3} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  {t("beforeAfter.b")}
                </th>
                <th colSpan={withNotes ? 4 : 3} className="border-l-2 border-ink-200" />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{st.by.label}</th>
                <th className={thNum}>{t("strata.cols.slabs")}</th>
                <th className={thNum}>{t("strata.cols.affected")}</th>
                <th className={thNum}>{t("strata.cols.share")}</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>{t("strata.cols.slabs")}</th>
                <th className={thNum}>{t("strata.cols.affected")}</th>
                <th className={thNum}>{t("strata.cols.share")}</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>{t("strata.cols.difference")}</th>
                <th className={thNum}>{t("strata.cols.ci")}</th>
                <th className={thNum}>{t("strata.cols.oddsRatio")}</th>
                {withNotes ? <th className={th}>{t("strata.cols.note")}</th> : null}
              </tr>
            </thead>
            <tbody>
              {st.strata.map((s) => {
                const few = s.a.slabs < FEW_SLABS || s.b.slabs < FEW_SLABS;
                return (
                  <tr key={s.label} className={`border-b border-ink-100 align-top ${few ? "bg-ink-50" : ""}`} data-testid="stratum-row">
                    <td className={`${td} font-semibold`}>
                      <span data-field="label">{levelName(s.label)}</span>
                      {few ? <FewMark /> : null}
                    </td>
                    <td className={tdNum} data-field="aSlabs">
                      {count(s.a.slabs)}
                    </td>
                    <td className={tdNum} data-field="aAffected">
                      {count(s.a.affected)}
                    </td>
                    <td className={tdNum} data-field="aRate">
                      {pct(s.a.rate)}
                    </td>
                    <td className={`${tdNum} border-l-2 border-ink-200`} data-field="bSlabs">
                      {count(s.b.slabs)}
                    </td>
                    <td className={tdNum} data-field="bAffected">
                      {count(s.b.affected)}
                    </td>
                    <td className={tdNum} data-field="bRate">
                      {pct(s.b.rate)}
                    </td>
                    <td className={`${tdNum} border-l-2 border-ink-200`} data-field="diff">
                      {points(s.difference.value, true)}
                    </td>
                    <td className={tdNum} data-field="diffCi">
                      {s.difference.value === null ? "—" : t("strata.range", { lower: points(s.difference.lower), upper: points(s.difference.upper) })}
                    </td>
                    <td className={tdNum}>
                      <span className="font-semibold" data-field="or">
                        {sig(s.oddsRatio, 3)}
                      </span>{" "}
                      <span className="text-xs text-ink-600" data-field="orCi">
                        ({ratioRange(s.ciLower, s.ciUpper)})
                      </span>
                    </td>
                    {withNotes ? <td className={`${td} min-w-40 text-xs text-ink-700`}>{s.reason ?? (s.zeroCellCorrection ? zeroCellWords : "")}</td> : null}
                  </tr>
                );
              })}
            </tbody>
          </table>
        </TableWrap>
        {st.notes.length ? (
          <ul className="list-disc space-y-0.5 pl-5 text-xs text-ink-700" data-testid="strata-notes">
            {st.notes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        ) : null}
        <details className="text-xs text-ink-700">
          <summary className="min-h-8 cursor-pointer font-semibold">{t("strata.methods")}</summary>
          <dl className="mt-2 space-y-1">
            {Object.entries(st.methods).map(([k, m]) => (
              <div key={k}>
                <dt className="inline font-semibold">{t("strata.methodName", { name: t(`strata.methodNames.${k}`, { defaultValue: k }) })} </dt>
                <dd className="inline">{m}</dd>
              </div>
            ))}
          </dl>
        </details>
      </div>
    </Card>
  );
}
