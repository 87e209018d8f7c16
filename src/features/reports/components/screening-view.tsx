import { Link } from "react-router";
import type { Screening } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { lowerFirst, num, pct, plural, pValue, sig } from "@/lib/format";
import { ratioRange, SE_WORDS, SeChoice } from "./estimates";
import { joinList, listOf, type ReportParams } from "./report-params";
import { SettingsRow } from "./settings";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";
import { TermPick } from "./term-pick";

/** What every variable's adjusted test is adjusted for (grade family unless changed; none for crude only), and the SEs. */
export function ScreeningSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Partial<Record<string, string | undefined>>) => void }) {
  const adjust = listOf(params.adjustFor).filter((k) => k !== "none");
  return (
    <SettingsRow>
      <div className="col-span-2">
        <TermPick
          label="Adjust every test for"
          testId="adjust-pick"
          value={adjust}
          emptyLabel="Nothing (crude only)"
          hint="Each condition is tested in a model with these terms, and ranked by that adjusted test. Grade family is the default; untick it for the crude ranking."
          onChange={(keys) => onChange({ adjustFor: keys.length ? joinList(keys) : "none" })}
        />
      </div>
      {adjust.length ? <SeChoice value={params.se ?? "cluster"} onChange={(v) => onChange({ se: v })} /> : null}
    </SettingsRow>
  );
}

type Row = Screening["variables"][number];

const METHOD_NAMES: Record<string, string> = {
  welch: "Welch t",
  chiSquare: "Chi-square",
  crude: "Crude odds ratios",
  adjusted: "Adjusted tests",
  multiplicity: "Multiple testing",
  grouping: "Values",
};

const labelOf = (key: string, rows: Row[]) => rows.find((r) => r.key === key)?.label ?? VARIABLES.find((v) => v.key === key)?.label ?? key;

export function ScreeningView({ data, linkFor }: { data: Screening; linkFor: (key: string) => string }) {
  const adjusted = data.adjustFor.length > 0;
  const few = data.variables.filter((v) => v.fewSlabs).length;
  const below = adjusted
    ? data.variables.filter((v) => v.adjusted?.pAdjusted !== null && v.adjusted?.pAdjusted !== undefined && v.adjusted.pAdjusted < 0.05).length
    : data.variables.filter((v) => v.pAdjusted !== null && v.pAdjusted < 0.05).length;
  const adjustWords = data.adjustFor.map((t) => lowerFirst(t.label)).join(", ");
  // A rank for each raw condition tested; a derived value sits under the raw condition it comes from, without a rank of its own.
  let rank = 0;
  const ranks = data.variables.map((v) => (v.parent || !v.testable ? null : ++rank));
  const cols = adjusted ? 11 : 8;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure label="Slabs (n)" value={data.slabs.toLocaleString("en-GB")} />
        <Figure
          label="Share affected"
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={`${data.affected.toLocaleString("en-GB")} of n = ${data.slabs.toLocaleString("en-GB")}`}
        />
        <Figure
          label="Adjusted for"
          value={<span data-testid="screening-adjusted-for">{adjusted ? data.adjustFor.map((t) => t.label).join(", ") : "Nothing"}</span>}
          note={
            adjusted ? `${SE_WORDS[data.seMethod].short.toLowerCase()} SEs · ${data.tests.adjusted} adjusted tests` : `crude only · ${data.tests.crude} tests`
          }
        />
        <Figure
          label={adjusted ? "Adjusted tests, BH p below 0.05" : "p adjusted (BH) below 0.05"}
          value={below}
          note="Benjamini–Hochberg false discovery rate 5 %"
        />
      </div>
      <SmallNWarning
        notes={[
          ...data.notes.filter((n) => n.startsWith("Only")),
          few ? `${plural(few, "variable")} rest on few slabs or small expected counts, or cannot be tested (marked).` : "",
        ]}
      />
      <Card
        title={adjusted ? `Variables ranked by their test adjusted for ${adjustWords}` : "Variables ranked by adjusted p (crude tests)"}
        bodyClassName="p-2 sm:p-4"
      >
        <TableWrap caption={data.notes.filter((n) => !n.startsWith("Only")).join(" ")}>
          <table className="w-full text-sm" data-testid="screening-table">
            <thead>
              <tr className="border-b border-ink-200">
                <th colSpan={4} />
                <th colSpan={2} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  Crude (the condition alone)
                </th>
                {adjusted ? (
                  <th colSpan={3} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-900">
                    Adjusted for {adjustWords}
                  </th>
                ) : null}
                <th colSpan={2} />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={thNum}>#</th>
                <th className={th}>Variable</th>
                <th className={thNum}>n</th>
                <th className={thNum}>IQR</th>
                <th className={thNum}>Odds ratio per IQR (95 % CI)</th>
                <th className={thNum}>p (BH)</th>
                {adjusted ? (
                  <>
                    <th className={`${thNum} border-l-2 border-ink-200`}>Odds ratio per IQR (95 % CI)</th>
                    <th className={thNum}>p</th>
                    <th className={thNum}>p (BH)</th>
                  </>
                ) : null}
                <th className={th}>Difference, affected − sound</th>
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
                      {v.label}
                    </span>
                    {v.fewSlabs && v.testable ? <FewMark /> : null}
                    {!v.testable ? <FewMark label="not testable" /> : null}
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
                        {v.n.toLocaleString("en-GB")}
                      </td>
                      <td colSpan={cols - 3} className={`${td} text-xs`} data-field="reason">
                        {v.reason ?? "not testable"}
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
                          from {v.derivedFrom.map((k) => lowerFirst(labelOf(k, data.variables))).join(", ")}; not counted in BH
                        </div>
                      ) : null}
                      {v.kind === "categorical" ? <div className="text-xs text-ink-600">{v.method}</div> : null}
                    </td>
                    <td className={tdNum} data-field="n">
                      {v.n.toLocaleString("en-GB")}
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
                        {v.kind === "numeric" ? "t" : "X²"} test p <span data-field="p">{pValue(v.p)}</span>
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
                          {v.adjusted && v.kind === "categorical" && v.adjusted.statistic !== null ? (
                            <div className="text-xs text-ink-600">
                              X² = {num(v.adjusted.statistic, 2)}
                              {v.adjusted.df !== null ? `, df ${v.adjusted.df}` : ""}
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
                          <span className="block text-ink-600">
                            mean {num(v.meanAffected, d)} affected, {num(v.meanSound, d)} sound
                          </span>
                        </span>
                      ) : (
                        <ul className="space-y-0.5">
                          {v.categories?.map((c) => (
                            <li key={c.label} className={c.slabs < FEW_SLABS ? "text-ink-500" : ""}>
                              <span className="font-semibold">{c.label}</span>: {pct(c.rate)} ({c.affected} of n = {c.slabs.toLocaleString("en-GB")})
                            </li>
                          ))}
                        </ul>
                      )}
                      {v.adjusted?.reason ? <div className="mt-1 text-ink-700">Adjusted: {v.adjusted.reason}</div> : null}
                    </td>
                    <td className={td}>
                      {v.kind === "numeric" ? (
                        <Link
                          to={linkFor(v.key)}
                          className="inline-flex min-h-11 items-center whitespace-nowrap text-sm font-semibold text-strand-700 underline"
                        >
                          Rate against it
                        </Link>
                      ) : null}
                    </td>
                  </tr>
                );
              })}
              {data.variables.length === 0 ? (
                <tr>
                  <td colSpan={cols} className={td}>
                    No variable to screen.
                  </td>
                </tr>
              ) : null}
            </tbody>
          </table>
        </TableWrap>
        <details className="mt-3 text-xs text-ink-700">
          <summary className="min-h-8 cursor-pointer font-semibold">Methods</summary>
          <dl className="mt-2 space-y-1">
            {Object.entries(data.methods).map(([k, m]) => (
              <div key={k}>
                <dt className="inline font-semibold">{METHOD_NAMES[k] ?? k}: </dt>
                <dd className="inline">{m}</dd>
              </div>
            ))}
          </dl>
        </details>
      </Card>
    </div>
  );
}
