import { lazy, Suspense } from "react";
import { useTranslation } from "react-i18next";
import type { Adjusted } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { useTerms } from "@/i18n/terms";
import { useLevelName } from "@/i18n/levels";
import { count, num, pct, pValue, sig } from "@/lib/format";
import { ChangeSentence, CollinearityMark, ratioRange, relChange, SE_WORDS, SeChoice } from "./estimates";
import { Figure } from "./figure";
import { joinList, listOf, type ReportParams } from "./report-params";
import { Choice, SettingsRow } from "./settings";
import { SmallNWarning } from "./small-n";
import { TermPick } from "./term-pick";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const ForestPlot = lazy(() => import("./charts/forest-plot"));

type Patch = Partial<Record<string, string | undefined>>;

/** The model's settings: the conditions to examine, what to adjust for, the standard errors, the step. */
export function AdjustedSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Patch) => void }) {
  const { t } = useTranslation("analysis");
  const examined = listOf(params.variables);
  const adjust = listOf(params.adjustFor).filter((k) => k !== "none");
  const se = SE_WORDS[params.se === "model" ? "model" : "cluster"];
  return (
    <div className="space-y-3">
      <SettingsRow>
        <div className="col-span-2">
          <TermPick
            label={t("adjusted.settings.examine")}
            testId="examine-pick"
            value={examined}
            min={1}
            emptyLabel={t("adjusted.settings.examineEmpty")}
            taken={Object.fromEntries(adjust.map((k) => [k, t("adjusted.roles.adjustment")]))}
            hint={t("adjusted.settings.examineHint")}
            onChange={(keys) => onChange({ variables: joinList(keys) })}
          />
        </div>
        <div className="col-span-2">
          <TermPick
            label={t("adjusted.settings.adjustFor")}
            testId="adjust-pick"
            value={adjust}
            emptyLabel={t("adjusted.settings.adjustEmpty")}
            taken={Object.fromEntries(examined.map((k) => [k, t("adjusted.roles.examined")]))}
            hint={t("adjusted.settings.adjustHint")}
            onChange={(keys) => onChange({ adjustFor: keys.length ? joinList(keys) : "none" })}
          />
        </div>
        <SeChoice value={params.se ?? "cluster"} onChange={(v) => onChange({ se: v })} />
        <Choice
          label={t("adjusted.settings.per")}
          testId="per-select"
          value={params.per ?? "step"}
          options={[
            { value: "step", label: t("adjusted.settings.perStep") },
            { value: "unit", label: t("adjusted.settings.perUnit") },
          ]}
          onChange={(v) => onChange({ per: v })}
          hint={params.per === "unit" ? t("adjusted.settings.perUnitHint") : t("adjusted.settings.perStepHint")}
        />
      </SettingsRow>
      <p className="text-xs text-ink-600" data-testid="se-words">
        <span className="font-semibold">{t("adjusted.settings.seLabel", { kind: se.short })}</span> {se.long}
      </p>
    </div>
  );
}

const orCell = (e: { oddsRatio: number | null }) => sig(e.oddsRatio, 3);

export function AdjustedView({ data }: { data: Adjusted }) {
  const { t, i18n } = useTranslation("analysis");
  // English writes a label inside a sentence in small letters; German keeps its nouns' capitals.
  const inSentence = (label: string) => (i18n.language === "de" ? label : label.toLowerCase());
  const se = SE_WORDS[data.seMethod];
  // A term's name as the screens say it (the answer's label is English, for API readers).
  const { variable } = useTerms();
  const levelName = useLevelName();
  const examined = data.terms.filter((t) => t.role === "examined");
  const adjustment = data.terms.filter((t) => t.role === "adjustment");
  const byVariable = new Map(data.variables.map((v) => [v.variable, v]));
  const sentences = data.terms.filter((t) => t.role === "examined" && t.changeInEstimate.sentence).map((t) => t.changeInEstimate.sentence!);
  const collinear = data.variables.filter((v) => v.collinearity === "notable" || v.collinearity === "serious");
  // The notes the screen shows elsewhere (sentences, collinearity) are not repeated in the notes list.
  const otherNotes = data.notes.filter((n) => !data.terms.some((t) => t.changeInEstimate.sentence === n) && !collinear.some((v) => v.collinearityNote === n));
  const adjustedWords = data.adjustFor.map((t) => inSentence(variable(t.key))).join(", ");
  // Words repeated on every row, looked up once.
  const roleWords = { examined: t("adjusted.roles.examined"), adjustment: t("adjusted.roles.adjustment") };
  const numericWord = t("adjusted.variables.numeric");
  const referenceWord = t("adjusted.variables.reference");

  // A note column only when a term has something to say (a reason, or an adjustment term's sentence).
  const withNotes = data.terms.some((t) => t.reason || (t.role === "adjustment" && t.changeInEstimate.sentence));
  const columns = withNotes ? 8 : 7;
  const termRows = (rows: Adjusted["terms"]) =>
    rows.map((t) => {
      const v = byVariable.get(t.variable);
      return (
        <tr
          key={`${t.variable}-${t.level ?? ""}`}
          className="border-b border-ink-100 align-top"
          data-testid="term-row"
          data-key={t.variable}
          data-level={t.level ?? undefined}
          data-role={t.role}
        >
          <td className={`${td} min-w-36`}>
            <span className="font-semibold" data-field="label">
              {variable(t.variable)}
            </span>
            <div className="text-xs text-ink-600" data-field="per">
              {t.perWords}
            </div>
          </td>
          <td className={tdNum}>
            <span data-field="crudeOr">{orCell(t.crude)}</span>
            <div className="text-xs text-ink-600" data-field="crudeCi">
              {ratioRange(t.crude.ciLower, t.crude.ciUpper)}
            </div>
          </td>
          <td className={tdNum} data-field="crudeP">
            {pValue(t.crude.p)}
          </td>
          <td className={`${tdNum} border-l-2 border-ink-200`}>
            <span className="font-semibold" data-field="adjustedOr">
              {orCell(t.adjusted)}
            </span>
            <div className="text-xs text-ink-700" data-field="adjustedCi">
              {ratioRange(t.adjusted.ciLower, t.adjusted.ciUpper)}
            </div>
          </td>
          <td className={`${tdNum} font-semibold`} data-field="adjustedP">
            {pValue(t.adjusted.p)}
          </td>
          <td className={tdNum} data-field="change">
            {relChange(t.changeInEstimate.relativeChange)}
          </td>
          <td className={tdNum}>
            <span data-field="vif">{sig(t.vif, 3)}</span>
            {v?.collinearity && v.collinearity !== "low" ? (
              <div>
                <CollinearityMark level={v.collinearity} />
              </div>
            ) : null}
          </td>
          {withNotes ? (
            <td className={`${td} min-w-48 text-xs text-ink-700`}>
              {t.reason ? (
                <span data-field="reason">{t.reason}</span>
              ) : t.changeInEstimate.sentence && t.role === "adjustment" ? (
                t.changeInEstimate.sentence
              ) : null}
            </td>
          ) : null}
        </tr>
      );
    });

  const group = (title: string, n: number) => (
    <tr className="bg-ink-50">
      <th colSpan={columns} scope="rowgroup" className="px-2 py-1.5 text-left text-xs font-semibold uppercase tracking-wide text-ink-700">
        {title} ({n})
      </th>
    </tr>
  );

  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="adjusted-summary">
        <Figure
          label={t("adjusted.figures.slabs")}
          value={<span data-testid="model-slabs">{count(data.slabs)}</span>}
          note={
            data.slabsLeftOut
              ? t("adjusted.figures.leftOut", { count: data.slabsLeftOut, n: count(data.slabsLeftOut), of: count(data.slabsInFilters) })
              : t("adjusted.figures.noneLeftOut")
          }
        />
        <Figure
          label={t("adjusted.figures.affected")}
          value={<span data-testid="model-affected">{count(data.affected)}</span>}
          note={t("adjusted.figures.affectedNote", { share: pct(data.slabs ? data.affected / data.slabs : null), n: count(data.slabs) })}
        />
        <Figure
          label={t("adjusted.figures.heats")}
          value={<span data-testid="model-heats">{count(data.heats)}</span>}
          note={t("adjusted.figures.heatsNote", { n: num(data.heats ? data.slabs / data.heats : null, 1) })}
        />
        <Figure
          label={t("adjusted.figures.se")}
          value={<span data-testid="model-se">{se.short}</span>}
          note={data.seMethod === "cluster" ? t("adjusted.figures.seCluster") : t("adjusted.figures.seModel")}
        />
      </div>

      {data.reason ? (
        <Notice tone="error" title={t("adjusted.noModel")}>
          <span data-testid="model-reason">{data.reason}</span>
        </Notice>
      ) : null}
      {data.separation ? (
        <Notice tone="caution" title={t("adjusted.separation")}>
          <span data-testid="model-separation">{data.separation.description}</span>
        </Notice>
      ) : null}
      {sentences.length ? (
        <div className="space-y-2" data-testid="change-sentences">
          {sentences.map((s) => (
            <ChangeSentence key={s}>{s}</ChangeSentence>
          ))}
        </div>
      ) : null}
      <SmallNWarning
        title={t("adjusted.collinearity")}
        notes={collinear.map((v) =>
          t(`adjusted.collinearNote.${v.collinearity === "serious" ? "serious" : "notable"}`, {
            label: variable(v.variable),
            gvif: sig(v.gvif, 3),
            gvifDf: sig(v.gvifPerDf, 3),
          }),
        )}
      />

      <Card title={adjustedWords ? t("adjusted.forestTitle", { terms: adjustedWords }) : t("adjusted.forestTitleCrude")}>
        <Suspense fallback={<Spinner label={t("loadingChart")} />}>
          <ForestPlot
            rows={data.terms.map((t) => ({
              label: variable(t.variable),
              per: t.perWords,
              crude: t.crude,
              adjusted: t.adjusted,
              reason: t.reason,
            }))}
          />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">{t("adjusted.forestRead", { se: inSentence(se.short) })}</p>
      </Card>

      <Card title={t("adjusted.termByTerm")} bodyClassName="p-2 sm:p-4">
        <TableWrap caption={data.per === "step" ? t("adjusted.termsCaption.step") : t("adjusted.termsCaption.unit")}>
          <table className="w-full text-sm" data-testid="terms-table">
            <thead>
              <tr className="border-b border-ink-200 text-xs">
                <th className={th} />
                <th colSpan={2} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  {t("adjusted.cols.crudeGroup")}
                </th>
                <th colSpan={2} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-900">
                  {t("adjusted.cols.adjustedGroup")}
                </th>
                <th colSpan={columns - 5} />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{t("adjusted.cols.term")}</th>
                <th className={thNum}>{t("adjusted.cols.oddsRatio")}</th>
                <th className={thNum}>p</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>{t("adjusted.cols.oddsRatio")}</th>
                <th className={thNum}>p</th>
                <th className={thNum}>{t("adjusted.cols.crudeVsAdjusted")}</th>
                <th className={thNum}>VIF</th>
                {withNotes ? <th className={th}>{t("adjusted.cols.note")}</th> : null}
              </tr>
            </thead>
            <tbody>
              {group(t("adjusted.groups.examined"), examined.length)}
              {termRows(examined)}
              {adjustment.length ? group(t("adjusted.groups.adjustment"), adjustment.length) : null}
              {termRows(adjustment)}
            </tbody>
          </table>
        </TableWrap>
      </Card>

      <Card title={t("adjusted.oneTestPerVariable")} bodyClassName="p-2 sm:p-4">
        <TableWrap caption={data.methods.tests}>
          <table className="w-full text-sm" data-testid="variables-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{t("adjusted.cols.variable")}</th>
                <th className={th}>{t("adjusted.cols.role")}</th>
                <th className={th}>{t("adjusted.cols.test")}</th>
                <th className={thNum}>χ²</th>
                <th className={thNum}>{t("adjusted.cols.df")}</th>
                <th className={thNum}>p</th>
                <th className={thNum}>GVIF</th>
                <th className={thNum}>{t("adjusted.cols.gvifDf")}</th>
                <th className={th}>{t("adjusted.cols.collinearity")}</th>
                <th className={th}>{t("adjusted.cols.levels")}</th>
              </tr>
            </thead>
            <tbody>
              {data.variables.map((v) => (
                <tr key={v.variable} className="border-b border-ink-100 align-top" data-testid="variable-row" data-key={v.variable}>
                  <td className={`${td} font-semibold`}>{variable(v.variable)}</td>
                  <td className={td}>{v.role === "examined" ? roleWords.examined : roleWords.adjustment}</td>
                  <td className={`${td} text-xs`}>{t(`adjusted.testNames.${v.test === "likelihood ratio" ? "lr" : "wald"}`)}</td>
                  <td className={tdNum} data-field="chi2">
                    {num(v.test === "likelihood ratio" ? v.lrChi2 : v.waldChi2, 2)}
                  </td>
                  <td className={tdNum}>{v.df}</td>
                  <td className={tdNum} data-field="p">
                    {pValue(v.p)}
                  </td>
                  <td className={tdNum}>{sig(v.gvif, 3)}</td>
                  <td className={tdNum}>{sig(v.gvifPerDf, 3)}</td>
                  <td className={td}>
                    <CollinearityMark level={v.collinearity} />
                  </td>
                  <td className={`${td} text-xs`}>
                    {v.levels?.length ? (
                      <ul className="space-y-0.5">
                        {v.levels.map((l) => (
                          <li key={l.level}>
                            <span className="font-semibold">{levelName(l.level)}</span>: {count(l.slabs)} ({count(l.affected)})
                            {l.reference ? <span className="text-ink-600"> — {referenceWord}</span> : null}
                          </li>
                        ))}
                      </ul>
                    ) : (
                      numericWord
                    )}
                    {v.reason ? <div className="text-ink-700">{v.reason}</div> : null}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableWrap>
        <dl className="mt-3 grid grid-cols-2 gap-2 text-xs text-ink-700 md:grid-cols-4" data-testid="model-fit">
          <div>
            <dt className="font-semibold">{t("adjusted.fit.converged")}</dt>
            <dd>
              {data.model.converged
                ? t("adjusted.fit.convergedYes", { count: data.model.iterations, n: count(data.model.iterations) })
                : t("adjusted.fit.convergedNo")}
            </dd>
          </div>
          <div>
            <dt className="font-semibold">{t("adjusted.fit.coefficients")}</dt>
            <dd>{t("adjusted.fit.coefficientsValue", { n: data.model.parameters })}</dd>
          </div>
          <div>
            <dt className="font-semibold">{t("adjusted.fit.deviance")}</dt>
            <dd className="tabular-nums">
              {num(data.model.deviance, 1)} ({num(data.model.nullDeviance, 1)})
            </dd>
          </div>
          <div>
            <dt className="font-semibold">AIC</dt>
            <dd className="tabular-nums">{num(data.model.aic, 1)}</dd>
          </div>
        </dl>
      </Card>

      {otherNotes.length ? (
        <Card title={t("adjusted.notes")}>
          <ul className="list-disc space-y-1 pl-5 text-sm" data-testid="model-notes">
            {otherNotes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        </Card>
      ) : null}
      <details className="rounded-md border border-ink-200 bg-white px-4 py-3 text-sm">
        <summary className="min-h-8 cursor-pointer font-semibold">{t("adjusted.methods")}</summary>
        <dl className="mt-2 space-y-2 text-xs text-ink-700">
          {Object.entries(data.methods).map(([k, v]) => (
            <div key={k}>
              <dt className="font-semibold">{t(`adjusted.methodNames.${k}`, { defaultValue: k })}</dt>
              <dd>{v}</dd>
            </div>
          ))}
        </dl>
      </details>
    </div>
  );
}
