import type { BeforeAfter } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { lowerFirst, num, pct, pValue, sig } from "@/lib/format";
import { ChangeSentence, points, ratioRange } from "./estimates";
import { Figure } from "./figure";
import { FEW_SLABS, FewMark } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

type Stratified = NonNullable<BeforeAfter["stratified"]>;

const METHOD_NAMES: Record<string, string> = {
  reading: "How to read it",
  mantelHaenszel: "Mantel–Haenszel, CMH and Breslow–Day",
  standardised: "Direct standardisation",
  changeInEstimate: "Crude against within",
};

const PLURALS: Record<string, string> = {
  grade_family: "grade families",
  grade: "grades",
  strand: "strands",
  caster: "casters",
  transition: "transition and other slabs",
  sequence_position: "positions in the sequence",
};

/** What a Breslow–Day p says, in words: a small p means the strata disagree. */
function breslowDayWords(bd: Stratified["breslowDay"], key: string, by: string): string {
  if (bd.p === null) return bd.reason ?? "not testable here";
  const many = PLURALS[key] ?? `${by} levels`;
  return bd.p < 0.05
    ? `A small p: the ${many} disagree — the odds ratio B against A differs from one to another, so one pooled number hides that. Read the rows below.`
    : `No sign that the ${many} disagree (a small p would mean the odds ratio differs between them); the pooled odds ratio summarises them fairly.`;
}

/**
 * A against B within each level of one grouping (grade family first): per-stratum rates, differences
 * and odds ratios, the Mantel–Haenszel odds ratio with the CMH test, Breslow–Day, and the difference
 * of directly standardised rates with its reference mix.
 */
export function BeforeAfterStrata({ stratified: st }: { stratified: Stratified }) {
  const by = lowerFirst(st.by.label);
  const mh = st.mantelHaenszel;
  const bd = st.breslowDay;
  const sd = st.standardised;
  const withNotes = st.strata.some((s) => s.reason || s.zeroCellCorrection);
  return (
    <Card title={`A against B within each ${by}`}>
      <div className="space-y-4" data-testid="before-after-strata">
        {st.changeInEstimate.sentence ? <ChangeSentence>{st.changeInEstimate.sentence}</ChangeSentence> : null}
        <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
          <Figure
            label="Crude odds ratio B vs A"
            value={<span data-testid="crude-or">{sig(st.crude.oddsRatio, 3)}</span>}
            note={
              <>
                95 % CI <span data-testid="crude-ci">{ratioRange(st.crude.ciLower, st.crude.ciUpper)}</span> · {by} ignored
              </>
            }
          />
          <Figure
            label={`Mantel–Haenszel odds ratio B vs A`}
            value={<span data-testid="mh-or">{sig(mh.oddsRatio, 3)}</span>}
            note={
              mh.reason ?? (
                <>
                  95 % CI <span data-testid="mh-ci">{ratioRange(mh.ciLower, mh.ciUpper)}</span> · CMH p <span data-testid="mh-p">{pValue(mh.p)}</span> · within
                  each {by}
                </>
              )
            }
          />
          <Figure
            label="Breslow–Day: do the strata agree?"
            value={<span data-testid="bd-p">{bd.p === null ? "—" : `p ${pValue(bd.p)}`}</span>}
            note={bd.p === null ? (bd.reason ?? "not testable") : `χ² ${num(bd.chi2, 2)}, df ${num(bd.df, 0)}${bd.tarone ? ", Tarone's correction" : ""}`}
          />
          <Figure
            label="Standardised difference B − A"
            value={<span data-testid="std-diff">{points(sd.difference, true)}</span>}
            note={sd.reason ?? `percentage points · 95 % CI ${points(sd.ciLower)} to ${points(sd.ciUpper)}`}
          />
        </div>
        <p className="text-sm text-ink-800" data-testid="bd-words">
          <span className="font-semibold">Breslow–Day:</span> {breslowDayWords(bd, st.by.key, by)}
        </p>
        <p className="text-sm text-ink-800" data-testid="std-words">
          <span className="font-semibold">Standardised rates:</span> A {pct(sd.rateA)}, B {pct(sd.rateB)}, both to the same reference mix — {sd.reference}:{" "}
          {sd.referenceMix.map((m) => `${m.label} ${pct(m.share, 1)} (n = ${m.slabs.toLocaleString("en-GB")})`).join(", ")}.
          {sd.leftOut.length
            ? ` Left out of the mix (only one group has slabs there): ${sd.leftOut.map((l) => `${l.label} (${l.slabs.toLocaleString("en-GB")} slabs, only in ${l.group})`).join(", ")}.`
            : ""}
        </p>
        <TableWrap
          caption={`${st.methods.reading ?? "A is the reference group"}. Differences with the Newcombe hybrid score interval; odds ratios with the Woolf interval.`}
        >
          <table className="w-full text-sm" data-testid="strata-table">
            <thead>
              <tr className="border-b border-ink-200">
                <th />
                <th colSpan={3} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  A (before)
                </th>
                <th colSpan={3} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  B (after)
                </th>
                <th colSpan={withNotes ? 4 : 3} className="border-l-2 border-ink-200" />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{st.by.label}</th>
                <th className={thNum}>Slabs</th>
                <th className={thNum}>Affected</th>
                <th className={thNum}>Share</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>Slabs</th>
                <th className={thNum}>Affected</th>
                <th className={thNum}>Share</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>B − A (points)</th>
                <th className={thNum}>95 % CI</th>
                <th className={thNum}>Odds ratio B vs A (95 % CI)</th>
                {withNotes ? <th className={th}>Note</th> : null}
              </tr>
            </thead>
            <tbody>
              {st.strata.map((s) => {
                const few = s.a.slabs < FEW_SLABS || s.b.slabs < FEW_SLABS;
                return (
                  <tr key={s.label} className={`border-b border-ink-100 align-top ${few ? "bg-ink-50" : ""}`} data-testid="stratum-row">
                    <td className={`${td} font-semibold`}>
                      <span data-field="label">{s.label}</span>
                      {few ? <FewMark /> : null}
                    </td>
                    <td className={tdNum} data-field="aSlabs">
                      {s.a.slabs.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="aAffected">
                      {s.a.affected.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="aRate">
                      {pct(s.a.rate)}
                    </td>
                    <td className={`${tdNum} border-l-2 border-ink-200`} data-field="bSlabs">
                      {s.b.slabs.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="bAffected">
                      {s.b.affected.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="bRate">
                      {pct(s.b.rate)}
                    </td>
                    <td className={`${tdNum} border-l-2 border-ink-200`} data-field="diff">
                      {points(s.difference.value, true)}
                    </td>
                    <td className={tdNum} data-field="diffCi">
                      {s.difference.value === null ? "—" : `${points(s.difference.lower)} to ${points(s.difference.upper)}`}
                    </td>
                    <td className={tdNum}>
                      <span className="font-semibold" data-field="or">
                        {sig(s.oddsRatio, 3)}
                      </span>{" "}
                      <span className="text-xs text-ink-600" data-field="orCi">
                        ({ratioRange(s.ciLower, s.ciUpper)})
                      </span>
                    </td>
                    {withNotes ? (
                      <td className={`${td} min-w-40 text-xs text-ink-700`}>
                        {s.reason ?? (s.zeroCellCorrection ? "0.5 added to every cell (a zero cell)" : "")}
                      </td>
                    ) : null}
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
          <summary className="min-h-8 cursor-pointer font-semibold">Methods</summary>
          <dl className="mt-2 space-y-1">
            {Object.entries(st.methods).map(([k, m]) => (
              <div key={k}>
                <dt className="inline font-semibold">{METHOD_NAMES[k] ?? k}: </dt>
                <dd className="inline">{m}</dd>
              </div>
            ))}
          </dl>
        </details>
      </div>
    </Card>
  );
}
