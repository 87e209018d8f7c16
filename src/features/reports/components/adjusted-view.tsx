import { lazy, Suspense } from "react";
import type { Adjusted } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { num, pct, plural, pValue, sig } from "@/lib/format";
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
  const examined = listOf(params.variables);
  const adjust = listOf(params.adjustFor).filter((k) => k !== "none");
  return (
    <div className="space-y-3">
      <SettingsRow>
        <div className="col-span-2">
          <TermPick
            label="Conditions to examine"
            testId="examine-pick"
            value={examined}
            min={1}
            emptyLabel="Choose a condition"
            taken={Object.fromEntries(adjust.map((k) => [k, "adjusted for"]))}
            hint="The conditions whose association with the defect you want to see, crude and adjusted. Up to 8."
            onChange={(keys) => onChange({ variables: joinList(keys) })}
          />
        </div>
        <div className="col-span-2">
          <TermPick
            label="Adjust for"
            testId="adjust-pick"
            value={adjust}
            emptyLabel="Nothing (crude only)"
            taken={Object.fromEntries(examined.map((k) => [k, "examined"]))}
            hint="What the odds ratios are adjusted for: grade family is offered first, as the grade mix confounds almost everything. Up to 8."
            onChange={(keys) => onChange({ adjustFor: keys.length ? joinList(keys) : "none" })}
          />
        </div>
        <SeChoice value={params.se ?? "cluster"} onChange={(v) => onChange({ se: v })} />
        <Choice
          label="Odds ratios per"
          testId="per-select"
          value={params.per ?? "step"}
          options={[
            { value: "step", label: "Readable step" },
            { value: "unit", label: "One unit" },
          ]}
          onChange={(v) => onChange({ per: v })}
          hint={params.per === "unit" ? "per 1 m/min, per 1 A, per 1 °C …" : "per 0.1 m/min, per 100 A, per 10 °C …"}
        />
      </SettingsRow>
      <p className="text-xs text-ink-600" data-testid="se-words">
        <span className="font-semibold">{SE_WORDS[params.se === "model" ? "model" : "cluster"].short} standard errors:</span>{" "}
        {SE_WORDS[params.se === "model" ? "model" : "cluster"].long}
      </p>
    </div>
  );
}

const orCell = (e: { oddsRatio: number | null }) => sig(e.oddsRatio, 3);

export function AdjustedView({ data }: { data: Adjusted }) {
  const se = SE_WORDS[data.seMethod];
  const examined = data.terms.filter((t) => t.role === "examined");
  const adjustment = data.terms.filter((t) => t.role === "adjustment");
  const byVariable = new Map(data.variables.map((v) => [v.variable, v]));
  const sentences = data.terms.filter((t) => t.role === "examined" && t.changeInEstimate.sentence).map((t) => t.changeInEstimate.sentence!);
  const collinear = data.variables.filter((v) => v.collinearity === "notable" || v.collinearity === "serious");
  // The notes the screen shows elsewhere (sentences, collinearity) are not repeated in the notes list.
  const otherNotes = data.notes.filter(
    (n) => !data.terms.some((t) => t.changeInEstimate.sentence === n) && !collinear.some((v) => n.startsWith(`${v.label}: GVIF`)),
  );
  const adjustedWords = data.adjustFor.length ? data.adjustFor.map((t) => t.label.toLowerCase()).join(", ") : "nothing";

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
              {t.label}
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
          label="Slabs in the model (n)"
          value={<span data-testid="model-slabs">{data.slabs.toLocaleString("en-GB")}</span>}
          note={
            data.slabsLeftOut
              ? `${plural(data.slabsLeftOut, "slab")} of ${data.slabsInFilters.toLocaleString("en-GB")} left out (a value missing)`
              : "every slab in the filters"
          }
        />
        <Figure
          label="Affected slabs (events)"
          value={<span data-testid="model-affected">{data.affected.toLocaleString("en-GB")}</span>}
          note={`${pct(data.slabs ? data.affected / data.slabs : null)} of n = ${data.slabs.toLocaleString("en-GB")}`}
        />
        <Figure
          label="Heats (clusters)"
          value={<span data-testid="model-heats">{data.heats.toLocaleString("en-GB")}</span>}
          note={`about ${num(data.heats ? data.slabs / data.heats : null, 1)} slabs a heat`}
        />
        <Figure
          label="Standard errors"
          value={<span data-testid="model-se">{se.short}</span>}
          note={data.seMethod === "cluster" ? "slabs of a heat: one cluster" : "slabs taken as independent"}
        />
      </div>

      {data.reason ? (
        <Notice tone="error" title="No model">
          <span data-testid="model-reason">{data.reason}</span>
        </Notice>
      ) : null}
      {data.separation ? (
        <Notice tone="caution" title="Separation or no convergence">
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
        title="Collinearity"
        notes={collinear.map(
          (v) =>
            `${v.label}: GVIF ${sig(v.gvif, 3)}, GVIF^(1/(2·df)) ${sig(v.gvifPerDf, 3)} — ${v.collinearity} collinearity with the other terms. Its adjusted odds ratio has a wide interval and may move with the choice of terms.`,
        )}
      />

      <Card title={`Crude and adjusted odds ratios (adjusted for ${adjustedWords})`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <ForestPlot
            rows={data.terms.map((t) => ({
              label: t.label,
              per: t.perWords,
              crude: t.crude,
              adjusted: t.adjusted,
              reason: t.reason,
            }))}
          />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          Hollow circles: each condition alone (crude); filled squares: in the model with every other term (adjusted). Whiskers are Wald 95 % intervals with{" "}
          {se.short.toLowerCase()} standard errors; the vertical line at 1 is no association. A logarithmic axis, so 0.5 and 2 lie equally far from 1.
        </p>
      </Card>

      <Card title="Term by term" bodyClassName="p-2 sm:p-4">
        <TableWrap
          caption={`Odds ratios ${data.per === "step" ? "per each condition's readable step" : "per one unit"}; a categorical term per level against its reference level. “Crude vs adjusted” is (crude − adjusted) / adjusted. VIF: the generalised variance inflation factor of the term's variable (Fox & Monette), above 5 notable, above 10 serious.`}
        >
          <table className="w-full text-sm" data-testid="terms-table">
            <thead>
              <tr className="border-b border-ink-200 text-xs">
                <th className={th} />
                <th colSpan={2} className="px-2 pt-2 text-center text-xs font-semibold text-ink-700">
                  Crude (the term alone)
                </th>
                <th colSpan={2} className="border-l-2 border-ink-200 px-2 pt-2 text-center text-xs font-semibold text-ink-900">
                  Adjusted (in the model)
                </th>
                <th colSpan={columns - 5} />
              </tr>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>Term</th>
                <th className={thNum}>Odds ratio (95 % CI)</th>
                <th className={thNum}>p</th>
                <th className={`${thNum} border-l-2 border-ink-200`}>Odds ratio (95 % CI)</th>
                <th className={thNum}>p</th>
                <th className={thNum}>Crude vs adjusted</th>
                <th className={thNum}>VIF</th>
                {withNotes ? <th className={th}>Note</th> : null}
              </tr>
            </thead>
            <tbody>
              {group("Conditions examined", examined.length)}
              {termRows(examined)}
              {adjustment.length ? group("Adjusted for", adjustment.length) : null}
              {termRows(adjustment)}
            </tbody>
          </table>
        </TableWrap>
      </Card>

      <Card title="One test per variable" bodyClassName="p-2 sm:p-4">
        <TableWrap caption={data.methods.tests}>
          <table className="w-full text-sm" data-testid="variables-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>Variable</th>
                <th className={th}>Role</th>
                <th className={th}>Test</th>
                <th className={thNum}>χ²</th>
                <th className={thNum}>df</th>
                <th className={thNum}>p</th>
                <th className={thNum}>GVIF</th>
                <th className={thNum}>GVIF^(1/(2·df))</th>
                <th className={th}>Collinearity</th>
                <th className={th}>Levels: slabs (affected)</th>
              </tr>
            </thead>
            <tbody>
              {data.variables.map((v) => (
                <tr key={v.variable} className="border-b border-ink-100 align-top" data-testid="variable-row" data-key={v.variable}>
                  <td className={`${td} font-semibold`}>{v.label}</td>
                  <td className={td}>{v.role === "examined" ? "examined" : "adjusted for"}</td>
                  <td className={`${td} text-xs`}>{v.test}</td>
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
                            <span className="font-semibold">{l.level}</span>: {l.slabs.toLocaleString("en-GB")} ({l.affected.toLocaleString("en-GB")})
                            {l.reference ? <span className="text-ink-600"> — reference</span> : null}
                          </li>
                        ))}
                      </ul>
                    ) : (
                      "numeric"
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
            <dt className="font-semibold">Converged</dt>
            <dd>{data.model.converged ? `yes, in ${plural(data.model.iterations, "iteration")}` : "no — the estimates are not to be read"}</dd>
          </div>
          <div>
            <dt className="font-semibold">Coefficients</dt>
            <dd>{data.model.parameters} (intercept included)</dd>
          </div>
          <div>
            <dt className="font-semibold">Deviance (null deviance)</dt>
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
        <Card title="Notes">
          <ul className="list-disc space-y-1 pl-5 text-sm" data-testid="model-notes">
            {otherNotes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        </Card>
      ) : null}
      <details className="rounded-md border border-ink-200 bg-white px-4 py-3 text-sm">
        <summary className="min-h-8 cursor-pointer font-semibold">Methods</summary>
        <dl className="mt-2 space-y-2 text-xs text-ink-700">
          {Object.entries(data.methods).map(([k, v]) => (
            <div key={k}>
              <dt className="font-semibold">{METHOD_NAMES[k] ?? k}</dt>
              <dd>{v}</dd>
            </div>
          ))}
        </dl>
      </details>
    </div>
  );
}

const METHOD_NAMES: Record<string, string> = {
  adjusted: "Adjusted model",
  crude: "Crude estimates",
  tests: "Test per variable",
  changeInEstimate: "Crude against adjusted",
  collinearity: "Collinearity",
  grouping: "Values",
};
