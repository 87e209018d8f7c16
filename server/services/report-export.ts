/**
 * Reports as Excel workbooks (exceljs). The workbook is built from the very object the API returns
 * for the same query string, so its numbers are the API's numbers. Every workbook opens with a
 * "Parameters" sheet (the filters, who and when, the methods and the cautions); each table gets a
 * sheet with units in the headers, number formats, a frozen header row and an autofilter.
 */
import type { Language } from "@shared/i18n/languages";
import { levelSaid } from "@shared/i18n/levels";
import { translator } from "../lib/i18n";
import { textIn } from "../lib/words";
import { addItemSheet, addTableSheet, newWorkbook, workbookBuffer, D2, D3, N0, PCT, type SheetColumn, type TableLook } from "../lib/workbook-sheets";
import type { CausePareto } from "@shared/api/causes";
import type { Adjusted, BeforeAfter, ControlChart, Overview, ProcessWindow, RateByVariable, Screening, SlabPositions } from "@shared/api/reports";
import enServer from "@shared/i18n/locales/en/server.json";
import { SEVERITY_LABELS, STAGE_LABELS } from "@shared/domain";
import { CATEGORICAL_LABELS, VARIABLES, type CategoricalKey } from "@shared/variables";

/** kind "p": a p-value column (see P below). */
type Col = SheetColumn & { kind?: "p" };
type Sheet = { name: string; columns: Col[]; rows: Record<string, unknown>[] };

/**
 * p-values: four decimals, and in scientific notation below 10⁻⁴ so a tiny p never reads as 0.0000.
 * A column with this format (or kind "p") is a p-value column: a p that underflowed to 0 in double
 * precision is written as the smallest positive normal double (2.2E-308, also Excel's smallest
 * number), never as 0.
 */
const P = "[<0.0001]0.00E+00;0.0000";
const P_FLOOR = 2.2250738585072014e-308;
const isPColumn = (c: Col) => c.kind === "p" || c.numFmt === P;

/** Keys (under server:report.) of a control chart's phases and a before-after test's name. */
const PHASE_WORDS = { before: "phases.before", baseline: "phases.baseline", monitoring: "phases.monitoring" } as const;
const TEST_WORDS = { fisher: "testNames.fisher", "chi-square": "testNames.chiSquare", none: "testNames.none" } as const;

const referenceMixSheet = (mix: { label: string; slabs: number; share: number }[], by: string, w: W): Sheet => ({
  name: w("sheets.referenceMix"),
  columns: [
    { header: by, key: "label", width: 18 },
    { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
    { header: w("headers.shareOfTheMix"), key: "share", numFmt: PCT },
  ],
  rows: mix.map((m) => ({ ...m, label: w.level(m.label) })),
});

// --- Rate against a variable (adjusted and per stratum), screening (adjusted), the adjusted model ---

const OR = "0.000";
const yes = (w: W, b: boolean | null | undefined) => (b ? w("words.yes") : "");

/** The adjusted and crude odds ratios of rate against a variable, and the per-level rates and odds ratios. */
/** A binned rate table's columns: the bin's bounds in the variable's unit, slabs, affected, rate and its 95 % interval. */
const binColumns = (w: W, u: string): Col[] => [
  { header: w("headers.fromUnit", { unit: u }), key: "lower", numFmt: D3 },
  { header: w("headers.toUnit", { unit: u }), key: "upper", numFmt: D3 },
  { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
  { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
  { header: w("headers.rate"), key: "rate", numFmt: PCT },
  { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: PCT },
  { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: PCT },
];

function rateByVariableAdjustedSheets(x: RateByVariable, w: W): Sheet[] {
  const u = x.variable.unit;
  const perUnit = u === "–" ? w("per.one") : w("per.oneUnit", { unit: u });
  const sheets: Sheet[] = [];
  const a = x.adjusted;
  if (a) {
    const adjustedFor = a.adjustFor.map((t) => w.inSentence(w.term(t.key, t.label))).join(", ");
    const se = w(a.seMethod === "cluster" ? "words.heatClustered" : "words.modelBased");
    const row = (estimate: string, f: NonNullable<RateByVariable["adjusted"]>["crude"], perStep: boolean) => ({
      estimate,
      per: perStep ? (u === "–" ? w("per.step", { step: f.perStep.step }) : w("per.stepUnit", { step: f.perStep.step, unit: u })) : perUnit,
      oddsRatio: perStep ? f.perStep.oddsRatio : f.oddsRatio,
      ciLower: perStep ? f.perStep.ciLower : f.oddsRatioCiLower,
      ciUpper: perStep ? f.perStep.ciUpper : f.oddsRatioCiUpper,
      slope: f.slope,
      se: f.se,
      p: f.p,
      seMethod: se,
    });
    sheets.push({
      name: w("sheets.adjusted"),
      columns: [
        { header: w("headers.estimate"), key: "estimate", width: 44 },
        { header: w("headers.oddsRatioPer"), key: "per", width: 16 },
        { header: w("headers.oddsRatio"), key: "oddsRatio", numFmt: OR },
        { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: OR },
        { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: OR },
        { header: w("headers.slopeLogOdds", { per: perUnit }), key: "slope", numFmt: "0.0000" },
        { header: w("headers.standardErrorOfTheSlope"), key: "se", numFmt: "0.0000" },
        { header: w("headers.pWaldTwoSided"), key: "p", numFmt: P },
        { header: w("headers.standardErrors"), key: "seMethod", width: 16 },
      ],
      rows: [
        row(w("words.adjustedFor", { terms: adjustedFor }), a, true),
        row(w("words.adjustedFor", { terms: adjustedFor }), a, false),
        row(w("words.crudeAlone"), a.crude, true),
        row(w("words.crudeAlone"), a.crude, false),
      ],
    });
  }
  const st = x.stratified;
  if (st) {
    sheets.push({
      name: w("sheets.ratesWithinLevels"),
      columns: [{ header: w.term(st.by.key, st.by.label), key: "level", width: 18 }, ...binColumns(w, u), { header: w("headers.tooFewSlabs"), key: "sparse" }],
      rows: st.strata.flatMap((level) => level.bins.map((b) => ({ level: w.level(level.label), ...b, sparse: yes(w, b.sparse) }))),
    });
    sheets.push({
      name: w("sheets.oddsRatiosWithinLevels"),
      columns: [
        { header: w.term(st.by.key, st.by.label), key: "level", width: 18 },
        { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
        { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
        { header: w("headers.rate"), key: "rate", numFmt: PCT },
        { header: w("headers.oddsRatioPerUnit", { per: perUnit }), key: "oddsRatio", numFmt: OR },
        { header: w("headers.n95PctCILower"), key: "oddsRatioCiLower", numFmt: OR },
        { header: w("headers.n95PctCIUpper"), key: "oddsRatioCiUpper", numFmt: OR },
        { header: w("headers.oddsRatioPerReadableStep"), key: "stepOr", numFmt: OR },
        { header: w("headers.step"), key: "step", numFmt: "General" },
        { header: w("headers.step95PctCILower"), key: "stepLower", numFmt: OR },
        { header: w("headers.step95PctCIUpper"), key: "stepUpper", numFmt: OR },
        { header: w("headers.pWaldTwoSided"), key: "p", numFmt: P },
        { header: w("headers.whyNoEstimate"), key: "reason", width: 50 },
      ],
      rows: st.strata.map((level) => ({
        level: w.level(level.label),
        slabs: level.slabs,
        affected: level.affected,
        rate: level.rate,
        ...level.logistic,
        stepOr: level.logistic.perStep.oddsRatio,
        step: level.logistic.perStep.step,
        stepLower: level.logistic.perStep.ciLower,
        stepUpper: level.logistic.perStep.ciUpper,
      })),
    });
  }
  return sheets;
}

/** Columns added to the screening sheet after the crude ones (which keep their places). */
const screeningAdjustedColumns = (w: W): Col[] => [
  { header: w("headers.unit"), key: "unit" },
  { header: w("headers.listedUnder"), key: "parentLabel", width: 22 },
  { header: w("headers.derivedFrom"), key: "derivedWords", width: 30 },
  { header: w("headers.testable"), key: "testableWords" },
  { header: w("headers.whyNotTested"), key: "reason", width: 40 },
  { header: w("headers.countedInBH"), key: "counted" },
  { header: w("headers.interquartileRangeUnit"), key: "iqr", numFmt: "0.0000" },
  { header: w("headers.crudeOddsRatioPerIQR"), key: "crudeOr", numFmt: OR },
  { header: w("headers.crude95PctCILower"), key: "crudeLower", numFmt: OR },
  { header: w("headers.crude95PctCIUpper"), key: "crudeUpper", numFmt: OR },
  { header: w("headers.crudePLogistic"), key: "crudeP", numFmt: P },
  { header: w("headers.adjustedOddsRatioPerIQR"), key: "adjOr", numFmt: OR },
  { header: w("headers.adjusted95PctCILower"), key: "adjLower", numFmt: OR },
  { header: w("headers.adjusted95PctCIUpper"), key: "adjUpper", numFmt: OR },
  { header: w("headers.adjustedP"), key: "adjP", numFmt: P },
  { header: w("headers.adjustedPBH"), key: "adjPAdjusted", numFmt: P },
  { header: w("headers.adjustedTest"), key: "adjTest", width: 40 },
  { header: w("headers.whyNotAdjusted"), key: "adjReason", width: 40 },
];

function screeningAdjustedCells(x: Screening, v: Screening["variables"][number], w: W) {
  const labelOf = (k: string) => {
    const label = VARIABLES.find((u) => u.key === k)?.label;
    return label ? w.term(k, label) : k;
  };
  return {
    unit: VARIABLES.find((u) => u.key === v.key)?.unit ?? "",
    parentLabel: v.parent ? labelOf(v.parent) : "",
    derivedWords: v.derivedFrom.map(labelOf).join(", "),
    testableWords: w(v.testable ? "words.yes" : "words.no"),
    counted: yes(w, v.countedInBh),
    crudeOr: v.crude?.oddsRatioPerIqr ?? null,
    crudeLower: v.crude?.ciLower ?? null,
    crudeUpper: v.crude?.ciUpper ?? null,
    crudeP: v.crude?.p ?? null,
    adjOr: v.adjusted?.oddsRatioPerIqr ?? null,
    adjLower: v.adjusted?.ciLower ?? null,
    adjUpper: v.adjusted?.ciUpper ?? null,
    adjP: v.adjusted?.p ?? null,
    adjPAdjusted: v.adjusted?.pAdjusted ?? null,
    adjTest: v.adjusted?.test ?? (x.adjustFor.length ? "" : w("words.nothingAdjustedFor")),
    adjReason: v.adjusted?.reason ?? "",
  };
}

/** The adjusted model: odds ratios crude and adjusted per term, the tests per variable, the levels and the fit. */
function adjustedSheets(x: Adjusted, w: W): Sheet[] {
  const role = (r: string) => w(r === "examined" ? "words.examined" : "words.adjustment");
  const testWords = (test: Adjusted["variables"][number]["test"]) =>
    w(test === "likelihood ratio" ? "adjustedTests.likelihoodRatio" : "adjustedTests.waldHeatClustered");
  return [
    {
      name: w("sheets.oddsRatios"),
      columns: [
        { header: w("headers.role"), key: "roleWords", width: 13 },
        { header: w("headers.variable"), key: "label", width: 28 },
        { header: w("headers.unit"), key: "unitWords" },
        { header: w("headers.level"), key: "level", width: 16 },
        { header: w("headers.againstReference"), key: "reference", width: 18 },
        { header: w("headers.oddsRatioPer"), key: "perWords", width: 22 },
        { header: w("headers.crudeOddsRatio"), key: "crudeOr", numFmt: OR },
        { header: w("headers.crude95PctCILower"), key: "crudeLower", numFmt: OR },
        { header: w("headers.crude95PctCIUpper"), key: "crudeUpper", numFmt: OR },
        { header: w("headers.crudeP"), key: "crudeP", numFmt: P },
        { header: w("headers.adjustedOddsRatio"), key: "adjOr", numFmt: OR },
        { header: w("headers.adjusted95PctCILower"), key: "adjLower", numFmt: OR },
        { header: w("headers.adjusted95PctCIUpper"), key: "adjUpper", numFmt: OR },
        { header: w("headers.adjustedP"), key: "adjP", numFmt: P },
        { header: w("headers.adjustedCoefficientLogOddsPerUnit"), key: "coef", numFmt: "0.000000" },
        { header: w("headers.itsStandardError"), key: "se", numFmt: "0.000000" },
        { header: w("headers.gvif"), key: "vif", numFmt: D2 },
        { header: w("headers.crudeVsAdjustedRelativeChange"), key: "change", numFmt: PCT },
        { header: w("headers.inWords"), key: "words", width: 80 },
      ],
      rows: x.terms.map((t) => ({
        roleWords: role(t.role),
        label: w.term(t.variable, t.label),
        unitWords: t.unit ?? "",
        level: t.level !== null ? w.level(t.level) : "",
        reference: t.reference !== null ? w.level(t.reference) : "",
        perWords: t.perWords,
        crudeOr: t.crude.oddsRatio,
        crudeLower: t.crude.ciLower,
        crudeUpper: t.crude.ciUpper,
        crudeP: t.crude.p,
        adjOr: t.adjusted.oddsRatio,
        adjLower: t.adjusted.ciLower,
        adjUpper: t.adjusted.ciUpper,
        adjP: t.adjusted.p,
        coef: t.adjusted.coef,
        se: t.adjusted.se,
        vif: t.vif,
        change: t.changeInEstimate.relativeChange,
        words: t.changeInEstimate.sentence ?? t.reason ?? "",
      })),
    },
    {
      name: w("sheets.tests"),
      columns: [
        { header: w("headers.variable"), key: "label", width: 28 },
        { header: w("headers.role"), key: "roleWords", width: 13 },
        { header: w("headers.df"), key: "df", numFmt: "0" },
        { header: w("headers.test"), key: "testWords", width: 22 },
        { header: w("headers.likelihoodRatioChiSquare"), key: "lrChi2", numFmt: "0.000" },
        { header: w("headers.waldChiSquare"), key: "waldChi2", numFmt: "0.000" },
        { header: w("headers.p"), key: "p", numFmt: P },
        { header: w("headers.gvif"), key: "gvif", numFmt: D2 },
        { header: w("headers.gvif12xdf"), key: "gvifPerDf", numFmt: D2 },
        { header: w("headers.collinearity"), key: "collinearity" },
        { header: w("headers.note"), key: "reason", width: 60 },
      ],
      rows: x.variables.map((v) => ({
        ...v,
        label: w.term(v.variable, v.label),
        roleWords: role(v.role),
        testWords: testWords(v.test),
        collinearity: v.collinearity ? w(`collinearity.${v.collinearity}`) : "",
      })),
    },
    {
      name: w("sheets.levels"),
      columns: [
        { header: w("headers.variable"), key: "label", width: 28 },
        { header: w("headers.level"), key: "level", width: 18 },
        { header: w("headers.reference"), key: "ref" },
        { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
        { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
      ],
      rows: x.variables.flatMap((v) =>
        (v.levels ?? []).map((l) => ({
          label: w.term(v.variable, v.label),
          level: w.level(l.level),
          ref: yes(w, l.reference),
          slabs: l.slabs,
          affected: l.affected,
        })),
      ),
    },
    {
      name: w("sheets.model"),
      columns: [
        { header: w("headers.item"), key: "item", width: 44 },
        { header: w("headers.value"), key: "value", numFmt: "#,##0.###" },
      ],
      rows: [
        { item: w("rows.slabsInModel"), value: x.slabs },
        { item: w("rows.affectedSlabs"), value: x.affected },
        { item: w("rows.heats"), value: x.heats },
        { item: w("rows.slabsInFilters"), value: x.slabsInFilters },
        { item: w("rows.slabsLeftOut"), value: x.slabsLeftOut },
        { item: w("rows.coefficients"), value: x.model.parameters },
        { item: w("rows.deviance"), value: x.model.deviance },
        { item: w("rows.nullDeviance"), value: x.model.nullDeviance },
        { item: w("rows.aic"), value: x.model.aic },
        { item: w("rows.newtonIterations"), value: x.model.iterations },
        { item: w(x.seMethod === "cluster" ? "rows.seCluster" : "rows.seModel"), value: null },
      ],
    },
  ];
}

function tablesFor(kind: string, r: unknown, w: W): Sheet[] {
  switch (kind) {
    case "rate-by-variable": {
      const x = r as RateByVariable;
      const u = x.variable.unit;
      return [
        {
          name: w("sheets.bins"),
          columns: [...binColumns(w, u)],
          rows: x.bins,
        },
        {
          name: w("sheets.tests"),
          columns: [
            { header: w("headers.test"), key: "test", width: 34 },
            { header: w("headers.statistic"), key: "statistic", numFmt: "0.0000" },
            { header: w("headers.pTwoSided"), key: "p", numFmt: P },
            { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: "0.0000" },
            { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: "0.0000" },
            { header: w("headers.method"), key: "method", width: 90 },
          ],
          rows: [
            { test: w("rows.spearman"), statistic: x.spearman.rho, p: x.spearman.p, method: x.methods.spearman },
            { test: w("rows.pointBiserial"), statistic: x.pointBiserial.r, p: x.pointBiserial.p, method: x.methods.pointBiserial },
            { test: w("rows.logisticSlope", { unit: u }), statistic: x.logistic.slope, p: x.logistic.p, method: x.methods.logistic },
            { test: w("rows.logisticIntercept"), statistic: x.logistic.intercept, p: null, method: "" },
            {
              test: w("headers.oddsRatioPerUnit", {
                per: u === "–" ? w("per.step", { step: x.logistic.perStep.step }) : w("per.stepUnit", { step: x.logistic.perStep.step, unit: u }),
              }),
              statistic: x.logistic.perStep.oddsRatio,
              p: null,
              ciLower: x.logistic.perStep.ciLower,
              ciUpper: x.logistic.perStep.ciUpper,
              method: w("words.wald95"),
            },
            {
              test: w("rows.oddsRatioPer", { unit: u }),
              statistic: x.logistic.oddsRatio,
              p: null,
              ciLower: x.logistic.oddsRatioCiLower,
              ciUpper: x.logistic.oddsRatioCiUpper,
              method: w("words.wald95"),
            },
            { test: w("rows.mannWhitney"), statistic: x.mannWhitney.u, p: x.mannWhitney.p, method: x.methods.mannWhitney },
          ],
        },
        {
          name: w("sheets.distribution"),
          columns: [
            { header: w("headers.slabs"), key: "group" },
            { header: w("headers.n"), key: "n", numFmt: N0 },
            { header: w("headers.minUnit", { unit: u }), key: "min", numFmt: D3 },
            { header: w("headers.q1Unit", { unit: u }), key: "q1", numFmt: D3 },
            { header: w("headers.medianUnit", { unit: u }), key: "median", numFmt: D3 },
            { header: w("headers.q3Unit", { unit: u }), key: "q3", numFmt: D3 },
            { header: w("headers.maxUnit", { unit: u }), key: "max", numFmt: D3 },
            { header: w("headers.meanUnit", { unit: u }), key: "mean", numFmt: D3 },
          ],
          rows: [
            { group: w("words.affected"), ...x.distribution.affected },
            { group: w("words.sound"), ...x.distribution.sound },
          ],
        },
        ...rateByVariableAdjustedSheets(x, w),
      ];
    }
    case "screening": {
      const x = r as Screening;
      return [
        {
          name: w("sheets.screening"),
          columns: [
            { header: w("headers.variable"), key: "label", width: 30 },
            { header: w("headers.key"), key: "key", width: 22 },
            { header: w("headers.kind"), key: "kind" },
            { header: w("headers.nSlabs"), key: "n", numFmt: N0 },
            { header: w("headers.statistic"), key: "statistic", numFmt: "0.000" },
            { header: w("headers.df"), key: "df", numFmt: "0.0" },
            { header: w("headers.p"), key: "p", numFmt: P },
            { header: w("headers.pAdjustedBH"), key: "pAdjusted", numFmt: P },
            { header: w("headers.meanAffected"), key: "meanAffected", numFmt: "0.000" },
            { header: w("headers.meanSound"), key: "meanSound", numFmt: "0.000" },
            { header: w("headers.fewSlabs"), key: "fewSlabs" },
            { header: w("headers.method"), key: "method", width: 60 },
            ...screeningAdjustedColumns(w),
          ],
          rows: x.variables.map((v) => ({ ...v, label: w.term(v.key, v.label), fewSlabs: yes(w, v.fewSlabs), ...screeningAdjustedCells(x, v, w) })),
        },
      ];
    }
    case "adjusted":
      return adjustedSheets(r as Adjusted, w);
    case "control-chart": {
      const x = r as ControlChart;
      const u = x.chart === "u";
      const std = x.points.some((p) => p.standardised);
      const sheets: Sheet[] = [
        {
          name: w(u ? "sheets.uChart" : x.chart === "laney" ? "sheets.laneyChart" : "sheets.pChart"),
          columns: [
            { header: w(x.period === "day" ? "headers.day" : "headers.isoWeek"), key: "period" },
            { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
            { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
            { header: w("headers.pShareAffected"), key: "p", numFmt: PCT },
            { header: w(u ? "headers.uclPerSlab" : "headers.ucl"), key: "ucl", numFmt: u ? D3 : PCT },
            { header: w(u ? "headers.lclPerSlab" : "headers.lcl"), key: "lcl", numFmt: u ? D3 : PCT },
            { header: w("headers.outOfControl"), key: "out" },
            { header: w("headers.phase"), key: "phase" },
            { header: w("headers.defects"), key: "defects", numFmt: N0 },
            ...(u ? [{ header: w("headers.defectsPerSlab"), key: "value", numFmt: D3 }] : []),
            { header: w(u ? "headers.centreU" : "headers.centreP"), key: "centre", numFmt: u ? D3 : PCT },
            { header: w("headers.zSigmaFromTheCentre"), key: "z", numFmt: D2 },
            { header: w("headers.runRulesSignalled"), key: "signals", width: 20 },
            ...(std
              ? [
                  { header: w("headers.standardisedRate"), key: "stdRate", numFmt: PCT },
                  { header: w("headers.standardised95PctCILower"), key: "stdLower", numFmt: PCT },
                  { header: w("headers.standardised95PctCIUpper"), key: "stdUpper", numFmt: PCT },
                  { header: w("headers.whyNoStandardisedRate"), key: "stdReason", width: 50 },
                ]
              : []),
          ],
          rows: x.points.map((p) => ({
            ...p,
            out: yes(w, p.outOfControl),
            phase: w(PHASE_WORDS[p.phase]),
            signals: p.signals.join(", "),
            stdRate: p.standardised?.rate,
            stdLower: p.standardised?.ciLower,
            stdUpper: p.standardised?.ciUpper,
            stdReason: p.standardised?.reason,
          })),
        },
        {
          name: w("sheets.limits"),
          columns: [
            { header: w("headers.item"), key: "item", width: 44 },
            { header: w("headers.value"), key: "value", numFmt: "0.0000" },
            { header: w("headers.note"), key: "note", width: 90 },
          ],
          rows: [
            {
              item: w(u ? "rows.centreU" : "rows.centreP"),
              value: x.centre,
              note: w(x.baseline ? "words.fromTheBaseline" : "words.fromEveryPeriod"),
            },
            ...(x.baseline
              ? [
                  { item: w("rows.baselineFrom"), value: null, note: x.baseline.from },
                  { item: w("rows.baselineTo"), value: null, note: x.baseline.to },
                  { item: w("rows.baselinePeriods"), value: x.baseline.periods, note: `${x.baseline.firstPeriod ?? ""} – ${x.baseline.lastPeriod ?? ""}` },
                  { item: w("rows.baselineSlabs"), value: x.baseline.slabs, note: "" },
                ]
              : []),
            ...(x.overdispersion
              ? [
                  { item: w("rows.laneySigmaZ"), value: x.overdispersion.sigmaZ, note: x.overdispersion.note },
                  { item: w("rows.chiSquareOneShare"), value: x.overdispersion.chi2, note: w("words.df", { df: x.overdispersion.df ?? "—" }) },
                  { item: w("rows.pChiSquare"), value: x.overdispersion.p, note: "" },
                  { item: w("rows.laneyApplies"), value: null, note: w(x.overdispersion.applies ? "words.yes" : "words.no") },
                ]
              : []),
            ...Object.entries(x.rules.on ? x.rules.legend : {}).map(([k, v]) => ({ item: w("rows.runRule", { rule: k }), value: null, note: v })),
          ],
        },
      ];
      if (x.standardisation) sheets.push(referenceMixSheet(x.standardisation.referenceMix, w.term(x.standardisation.by, x.standardisation.label), w));
      return sheets;
    }
    case "overview": {
      const x = r as Overview;
      const rate = [
        { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
        { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
        { header: w("headers.rate"), key: "rate", numFmt: PCT },
        { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: PCT },
        { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: PCT },
      ];
      return [
        {
          name: w("sheets.byPeriod"),
          columns: [
            { header: w("headers.period"), key: "period" },
            ...rate,
            { header: w("headers.defects"), key: "defects", numFmt: N0 },
            { header: w("headers.tonnesT"), key: "tonnes", numFmt: "#,##0.0" },
            { header: w("headers.defectsPer100Slabs"), key: "per100Slabs", numFmt: D2 },
            { header: w("headers.defectsPer1000T"), key: "per1000t", numFmt: D2 },
            ...(x.standardisation
              ? [
                  { header: w("headers.standardisedRate"), key: "stdRate", numFmt: PCT },
                  { header: w("headers.standardised95PctCILower"), key: "stdLower", numFmt: PCT },
                  { header: w("headers.standardised95PctCIUpper"), key: "stdUpper", numFmt: PCT },
                  { header: w("headers.whyNoStandardisedRate"), key: "stdReason", width: 50 },
                ]
              : []),
          ],
          rows: x.periods.map((p) => ({
            ...p,
            stdRate: p.standardised?.rate,
            stdLower: p.standardised?.ciLower,
            stdUpper: p.standardised?.ciUpper,
            stdReason: p.standardised?.reason,
          })),
        },
        {
          name: w("sheets.pareto"),
          columns: [
            { header: w("headers.type"), key: "code" },
            { header: w("headers.name"), key: "name", width: 40 },
            { header: w("headers.defects"), key: "defects", numFmt: N0 },
            { header: w("headers.slabsAffected"), key: "slabsAffected", numFmt: N0 },
            { header: w("headers.share"), key: "share", numFmt: PCT },
            { header: w("headers.cumulativeShare"), key: "cumulativeShare", numFmt: PCT },
          ],
          rows: x.pareto,
        },
        {
          name: w("sheets.byGrade"),
          columns: [{ header: w("headers.grade"), key: "grade" }, { header: w("headers.family"), key: "family" }, ...rate],
          rows: x.byGrade,
        },
        {
          name: w("sheets.byStrand"),
          columns: [{ header: w("headers.caster"), key: "caster" }, { header: w("headers.strand"), key: "strand" }, ...rate],
          rows: x.byStrand,
        },
        ...(x.standardisation ? [referenceMixSheet(x.standardisation.referenceMix, w.term(x.standardisation.by, x.standardisation.label), w)] : []),
      ];
    }
    case "process-window": {
      const x = r as ProcessWindow;
      return [
        {
          name: w("sheets.processWindow"),
          columns: [
            { header: w("headers.labelFrom", { label: w.term(x.x.key, x.x.label), unit: x.x.unit }), key: "xLower", numFmt: D3 },
            { header: w("headers.labelTo", { label: w.term(x.x.key, x.x.label), unit: x.x.unit }), key: "xUpper", numFmt: D3 },
            { header: w("headers.labelFrom", { label: w.term(x.y.key, x.y.label), unit: x.y.unit }), key: "yLower", numFmt: D3 },
            { header: w("headers.labelTo", { label: w.term(x.y.key, x.y.label), unit: x.y.unit }), key: "yUpper", numFmt: D3 },
            { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
            { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
            { header: w("headers.rate"), key: "rate", numFmt: PCT },
            { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: PCT },
            { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: PCT },
            { header: w("headers.underNSlabs", { n: x.minN }), key: "sparse" },
          ],
          rows: x.cells.map((c) => ({ ...c, sparse: yes(w, c.sparse) })),
        },
      ];
    }
    case "before-after": {
      const x = r as BeforeAfter;
      const sheets: Sheet[] = [
        {
          name: w("sheets.beforeAndAfter"),
          columns: [
            { header: w("headers.group"), key: "group" },
            { header: w("headers.label"), key: "label", width: 36 },
            { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
            { header: w("headers.affectedSlabs"), key: "affected", numFmt: N0 },
            { header: w("headers.rate"), key: "rate", numFmt: PCT },
            { header: w("headers.n95PctCILower"), key: "ciLower", numFmt: PCT },
            { header: w("headers.n95PctCIUpper"), key: "ciUpper", numFmt: PCT },
          ],
          rows: [
            { group: "A", ...x.a },
            { group: "B", ...x.b },
          ],
        },
        {
          name: w("sheets.difference"),
          columns: [
            { header: w("headers.bMinusA"), key: "value", numFmt: PCT },
            { header: w("headers.n95PctCILower"), key: "lower", numFmt: PCT },
            { header: w("headers.n95PctCIUpper"), key: "upper", numFmt: PCT },
            { header: w("headers.test"), key: "test" },
            { header: w("headers.pTwoSided"), key: "p", numFmt: P },
            { header: w("headers.method"), key: "method", width: 80 },
            { header: w("headers.whyNoP"), key: "reason", width: 50 },
          ],
          rows: [{ ...x.difference, test: w(TEST_WORDS[x.test.name]), p: x.test.p, method: `${x.difference.method}; ${x.test.method}`, reason: x.test.reason }],
        },
      ];
      const st = x.stratified;
      if (st) {
        const by = w.term(st.by.key, st.by.label);
        sheets.push(
          {
            // English lower-cases the name inside the sheet's name; German keeps its noun's capital.
            name: w("sheets.within", { by: w.inSentence(by) }),
            columns: [
              { header: by, key: "label", width: 18 },
              { header: w("headers.aSlabs"), key: "aSlabs", numFmt: N0 },
              { header: w("headers.aAffected"), key: "aAffected", numFmt: N0 },
              { header: w("headers.aRate"), key: "aRate", numFmt: PCT },
              { header: w("headers.bSlabs"), key: "bSlabs", numFmt: N0 },
              { header: w("headers.bAffected"), key: "bAffected", numFmt: N0 },
              { header: w("headers.bRate"), key: "bRate", numFmt: PCT },
              { header: w("headers.bMinusA"), key: "diff", numFmt: PCT },
              { header: w("headers.bMinusA95PctCILower"), key: "diffLower", numFmt: PCT },
              { header: w("headers.bMinusA95PctCIUpper"), key: "diffUpper", numFmt: PCT },
              { header: w("headers.oddsRatioBAgainstA"), key: "oddsRatio", numFmt: D3 },
              { header: w("headers.oddsRatio95PctCILower"), key: "ciLower", numFmt: D3 },
              { header: w("headers.oddsRatio95PctCIUpper"), key: "ciUpper", numFmt: D3 },
              { header: w("headers.note"), key: "reason", width: 50 },
            ],
            rows: st.strata.map((t) => ({
              label: w.level(t.label),
              aSlabs: t.a.slabs,
              aAffected: t.a.affected,
              aRate: t.a.rate,
              bSlabs: t.b.slabs,
              bAffected: t.b.affected,
              bRate: t.b.rate,
              diff: t.difference.value,
              diffLower: t.difference.lower,
              diffUpper: t.difference.upper,
              oddsRatio: t.oddsRatio,
              ciLower: t.ciLower,
              ciUpper: t.ciUpper,
              reason: t.reason,
            })),
          },
          {
            name: w("sheets.pooledOverStrata"),
            columns: [
              { header: w("headers.statistic"), key: "item", width: 44 },
              { header: w("headers.value"), key: "value", numFmt: "0.0000" },
              { header: w("headers.n95PctCILower"), key: "lower", numFmt: "0.0000" },
              { header: w("headers.n95PctCIUpper"), key: "upper", numFmt: "0.0000" },
              { header: w("headers.chiSquare"), key: "chi2", numFmt: "0.000" },
              { header: w("headers.df"), key: "df", numFmt: "0" },
              { header: w("headers.p"), key: "p", numFmt: P },
              { header: w("headers.note"), key: "note", width: 70 },
            ],
            rows: [
              { item: w("rows.crudeOddsRatio"), value: st.crude.oddsRatio, lower: st.crude.ciLower, upper: st.crude.ciUpper },
              {
                item: w("rows.mantelHaenszel", { by: w.inSentence(by) }),
                value: st.mantelHaenszel.oddsRatio,
                lower: st.mantelHaenszel.ciLower,
                upper: st.mantelHaenszel.ciUpper,
                chi2: st.mantelHaenszel.chi2,
                df: 1,
                p: st.mantelHaenszel.p,
                note: st.mantelHaenszel.reason ?? w("words.cmhTest"),
              },
              {
                item: w("rows.breslowDay"),
                chi2: st.breslowDay.chi2,
                df: st.breslowDay.df,
                p: st.breslowDay.p,
                note: st.breslowDay.reason ?? (st.breslowDay.tarone ? w("words.tarone") : ""),
              },
              { item: w("rows.standardisedA"), value: st.standardised.rateA, note: st.standardised.reason ?? "" },
              { item: w("rows.standardisedB"), value: st.standardised.rateB },
              {
                item: w("rows.standardisedDifference"),
                value: st.standardised.difference,
                lower: st.standardised.ciLower,
                upper: st.standardised.ciUpper,
                note: w("words.referenceMix", { reference: st.standardised.reference }),
              },
            ],
          },
          referenceMixSheet(st.standardised.referenceMix, by, w),
        );
      }
      return sheets;
    }
    case "slab-positions": {
      const x = r as SlabPositions;
      // A face is a key of the shared list: English writes it as it is, another language the screens' name.
      const faceWords = (f: string) => (w.language === "en" ? f : (w.raw(`common:terms.faces.${f}`, { defaultValue: f }) as string));
      // Edges as fractions → "0–20 %" per band.
      const bands = (edges: number[]) => edges.slice(0, -1).map((lo, i) => `${Math.round(lo * 100)}–${Math.round(edges[i + 1]! * 100)} %`);
      const along = bands(x.alongEdges);
      const across = bands(x.acrossEdges);
      return [
        {
          name: w("sheets.byFace"),
          columns: [
            { header: w("headers.face"), key: "face" },
            { header: w("headers.defects"), key: "defects", numFmt: N0 },
          ],
          rows: x.byFace.map((f) => ({ ...f, face: faceWords(f.face) })),
        },
        {
          name: w("sheets.alongTheSlab"),
          columns: [
            { header: w("headers.face"), key: "face" },
            ...along.map((a, i) => ({ header: w("headers.ofLengthFromHead", { range: a }), key: `a${i}`, numFmt: N0 })),
          ],
          rows: x.grid.map((g) => ({ face: faceWords(g.face), ...Object.fromEntries(g.along.map((v, i) => [`a${i}`, v])) })),
        },
        // The screen's table across the face (the surfaces; a section cut has no width to be placed on).
        {
          name: w("sheets.acrossTheFace"),
          columns: [
            { header: w("headers.face"), key: "face" },
            ...across.map((a, i) => ({ header: w("headers.ofWidthAcross", { range: a }), key: `c${i}`, numFmt: N0 })),
          ],
          rows: x.grid
            .filter((g) => g.face !== "section")
            .map((g) => ({ face: faceWords(g.face), ...Object.fromEntries(g.across.map((v, i) => [`c${i}`, v])) })),
        },
      ];
    }
    case "cause-pareto": {
      const x = r as CausePareto;
      return [
        {
          name: w("sheets.causes"),
          columns: [
            { header: w("headers.causeTag"), key: "code", width: 26 },
            { header: w("headers.name"), key: "name", width: 32 },
            { header: w("headers.group"), key: "group" },
            { header: w("headers.defects"), key: "defects", numFmt: N0 },
            { header: w("headers.slabs"), key: "slabs", numFmt: N0 },
            { header: w("headers.suspected"), key: "suspected", numFmt: N0 },
            { header: w("headers.probable"), key: "probable", numFmt: N0 },
            { header: w("headers.confirmed"), key: "confirmed", numFmt: N0 },
            { header: w("headers.shareOfTaggings"), key: "share", numFmt: PCT },
            { header: w("headers.cumulativeShare"), key: "cumulative", numFmt: PCT },
          ],
          rows: x.rows,
        },
        {
          name: w("sheets.counts"),
          columns: [
            { header: w("headers.defectsPassingTheFiltersN"), key: "defects", numFmt: N0 },
            { header: w("headers.tagged"), key: "tagged", numFmt: N0 },
            { header: w("headers.withoutACause"), key: "untagged", numFmt: N0 },
          ],
          rows: [x],
        },
      ];
    }
    default:
      return [];
  }
}

/** Query keys named in the screens' words (server:report.parameters.*), and per report (server:report.parametersByReport.*). */
const REPORT_WORDS = enServer.report as unknown as {
  parameters: Record<string, string>;
  parametersByReport: Record<string, Record<string, string>>;
  parameterValues: Record<string, Record<string, string>>;
  methodNames: Record<string, string>;
};
const has = (tree: Record<string, unknown> | undefined, key: string) => tree !== undefined && Object.prototype.hasOwnProperty.call(tree, key);
/** Query keys of a two-ranges comparison: their label takes the variable's unit. */
const RANGE_KEYS = new Set(["aMin", "aMax", "bMin", "bMax"]);
/** A key named nowhere is shown split into words, never as the bare key. */
const keyInWords = (key: string) =>
  key
    .replace(/([a-z])([A-Z])/g, "$1 $2")
    .replace(/_/g, " ")
    .replace(/^./, (c) => c.toUpperCase());

/** A variable or categorical key as the Parameters sheet names it (with its unit), or null for any other value. */
const variableWords = (k: string, w: W) => {
  const v = VARIABLES.find((x) => x.key === k);
  if (v) {
    const label = w.term(k, v.label);
    return v.unit && v.unit !== "–" ? `${label} (${v.unit})` : label;
  }
  const categorical = CATEGORICAL_LABELS[k as CategoricalKey];
  return categorical ? w.term(k, categorical) : null;
};

/**
 * The Parameters sheet's rows for a report's query string: labels and values in the screen's words,
 * in the workbook's language (English unless `w` says otherwise). Add a new query key to
 * server:report.parameters (or parametersByReport), a closed vocabulary's values to parameterValues.
 */
export function parameterRows(kind: string, query: string, w: W = wordsIn(null)): { k: string; v: string }[] {
  const search = new URLSearchParams(query);
  const unit = variableWords(search.get("variable") ?? "", w)?.match(/\(([^)]*)\)$/)?.[1];
  const out: { k: string; v: string }[] = [];
  for (const [key, raw] of search) {
    const label = has(REPORT_WORDS.parametersByReport[kind], key)
      ? w(`parametersByReport.${kind}.${key}`)
      : has(REPORT_WORDS.parameters, key)
        ? `${w(`parameters.${key}`)}${RANGE_KEYS.has(key) && unit ? ` (${unit})` : ""}`
        : keyInWords(key);
    const valueWords = (item: string) => {
      if (key === "stage" && has(STAGE_LABELS, item)) return w.raw(`common:terms.stages.${item}`);
      if (key === "minSeverity" && has(SEVERITY_LABELS, item))
        return w("parameterValues.minSeverity.level", { level: item, name: w.raw(`common:terms.severities.${item}`) });
      if (has(REPORT_WORDS.parameterValues[key], item)) return w(`parameterValues.${key}.${item}`);
      return variableWords(item, w) ?? item;
    };
    const value = raw
      .split(",")
      .map((item) => item.trim())
      .filter((item) => item !== "")
      .map(valueWords)
      .join(", ");
    out.push({ k: label, v: value || (key === "adjustFor" ? w("words.nothing") : raw) });
  }
  return out;
}

/** Keys of a report's `methods` in words (the route passes them as "key: text"), from server:report.methodNames. */
const methodInWords = (line: string, w: W) =>
  line.replace(/^([A-Za-z_]+): /, (_, key: string) => `${has(REPORT_WORDS.methodNames, key) ? w(`methodNames.${key}`) : keyInWords(key)}: `);

/** Method texts and notes of a report's answer, for the Parameters sheet (besides the `methods` the route passes). */
function explanationsOf(kind: string, r: unknown, language: Language): { k: string; v: string }[] {
  const rows: { k: string; v: string }[] = [];
  const notes = (list: string[] | undefined) => (list ?? []).forEach((v) => rows.push({ k: "Note", v }));
  if (kind === "control-chart") {
    const x = r as ControlChart;
    if (x.method) rows.push({ k: "Method", v: x.method });
    if (x.rules.on) rows.push({ k: "Method", v: x.rules.method });
    if (x.overdispersion) rows.push({ k: "Overdispersion", v: x.overdispersion.note });
    if (x.standardisation) rows.push({ k: "Method", v: x.standardisation.method });
    notes(x.notes);
  } else if (kind === "overview") {
    const x = r as Overview;
    rows.push({ k: "Method", v: textIn(language, "shares.wilson") });
    if (x.standardisation) rows.push({ k: "Method", v: x.standardisation.method });
    notes(x.notes);
  } else if (kind === "before-after") {
    const x = r as BeforeAfter;
    if (x.stratified) {
      for (const m of Object.values(x.stratified.methods)) rows.push({ k: "Method", v: m });
      if (x.stratified.changeInEstimate.sentence) rows.push({ k: "Finding", v: x.stratified.changeInEstimate.sentence });
      notes(x.stratified.notes);
    }
    notes(x.notes);
  } else if (kind === "process-window") {
    rows.push({ k: "Method", v: textIn(language, "shares.wilson") });
    notes((r as ProcessWindow).notes);
  } else {
    // Any other report's notes (rate against a variable, screening, the adjusted model …).
    const list = (r as { notes?: unknown }).notes;
    if (Array.isArray(list)) notes(list.filter((n): n is string => typeof n === "string"));
  }
  return rows;
}

/** The Parameters sheet's own item names (explanationsOf writes them in English) → their keys. */
const EXPLANATION_KEYS: Record<string, string> = { Note: "note", Method: "method", Overdispersion: "overdispersion", Finding: "finding" };
/** Report kinds with a title of their own (server:report.titles), and the cautions every workbook carries. */
const REPORT_TITLE_KEYS = new Set(Object.keys(enServer.report.titles));
const CAUTION_KEYS = Object.keys(enServer.report.cautions);

/**
 * The words of a workbook in one language: `w("headers.slabs")` reads `server:report.headers.slabs`;
 * `w.term(key, label)` is a variable's or categorical key's name (the report's own label in English);
 * `w.inSentence(name)` is such a name inside a sentence (English lower-cases it, German keeps its
 * noun's capital); `w.level(level)` is a categorical term's level ("1st heat", "CC1 strand 2") in the
 * screens' words, plant data (a grade) as it is; `w.raw` reads any catalogue key.
 */
type W = ((key: string, values?: Record<string, unknown>) => string) & {
  language: Language;
  term: (key: string, label: string) => string;
  inSentence: (name: string) => string;
  level: (level: string) => string;
  raw: (key: string, options?: Record<string, unknown>) => unknown;
};

/** A workbook's words in a language (English where none is given). */
function wordsIn(language: Language | null): W {
  const t = translator(language);
  const lng: Language = language ?? "en";
  return Object.assign((key: string, values?: Record<string, unknown>) => t(`server:report.${key}`, values ?? {}), {
    language: lng,
    // The report's label is the English name; other languages read the screens' names of the same key.
    term: (key: string, label: string) =>
      lng === "en" ? label : t(`common:terms.variables.${key}.label`, { defaultValue: t(`common:terms.categorical.${key}`, { defaultValue: label }) }),
    inSentence: (name: string) => (lng === "de" ? name : name.toLowerCase()),
    // The level stays the server's English (a key); only the cell says it in the reader's words.
    level: (level: string) =>
      lng === "en" ? level : levelSaid(level, (key, values) => t(`common:terms.${key}`, { ...values, defaultValue: "" }) || undefined),
    raw: (key: string, options?: Record<string, unknown>) => t(key, options ?? {}) as unknown,
  });
}

export async function reportWorkbook(
  kind: string,
  query: string,
  result: unknown,
  by: string,
  method: string[] = [],
  language: Language | null = null,
): Promise<Buffer> {
  const wb = await newWorkbook(new Date());
  /** The workbook's words in the asker's language (server:report.*). */
  const w = wordsIn(language);
  const { add } = addItemSheet(wb, w("sheets.parameters"), {
    item: { header: w("headers.parameter"), width: 28 },
    value: { header: w("headers.value"), width: 100 },
  });
  add(w("items.report"), REPORT_TITLE_KEYS.has(kind) ? w(`titles.${kind}`) : kind);
  add(w("items.generated"), new Date().toISOString());
  add(w("items.by"), by);
  const given = parameterRows(kind, query, w);
  if (given.length === 0) add(w("items.filters"), w("items.noFilters"));
  for (const row of given) add(row.k, row.v);
  for (const m of method) add(w("items.method"), methodInWords(m, w));
  for (const row of explanationsOf(kind, result, w.language)) add(EXPLANATION_KEYS[row.k] ? w(`items.${EXPLANATION_KEYS[row.k]}`) : row.k, row.v);
  CAUTION_KEYS.forEach((i) => add(w("items.caution"), w(`cautions.${i}`)));

  let floored = 0;
  const look: TableLook<Col> = {
    width: (header) => Math.max(12, header.length + 2),
    filter: "header",
    cell: (c, v) => {
      if (v === 0 && isPColumn(c)) {
        floored++;
        return P_FLOOR;
      }
      return v;
    },
  };
  for (const sheet of tablesFor(kind, result, w)) addTableSheet(wb, sheet.name, sheet.columns, sheet.rows, look);
  if (floored > 0) {
    add(w("items.reading"), w("items.underflow"));
  }
  return workbookBuffer(wb);
}
