import { z } from "zod";
import { STAGES } from "../domain";
import { RISK_BANDS } from "./risk";
import { CATEGORICAL_KEYS, CATEGORICAL_LABELS, rawInputsOf, TERM_KEYS, VARIABLE_KEYS, VARIABLES, type CategoricalKey } from "../variables";

/**
 * Filters every report takes. The slab is the unit: the date range, caster, strand, grade, family
 * and transition choose slabs; the defect filters (type, category, stage, minimum severity, cause)
 * decide which of their defects count. A slab is affected when it has at least one live, unrejected
 * defect passing the defect filters.
 */
const csv = z
  .string()
  .trim()
  .max(400)
  .optional()
  .transform((v) =>
    v
      ? v
          .split(",")
          .map((s) => s.trim())
          .filter(Boolean)
      : [],
  );

export const reportFiltersSchema = z.object({
  from: z.string().trim().max(10).optional(),
  to: z.string().trim().max(10).optional(),
  caster: z.string().trim().max(16).optional(),
  strand: z.coerce.number().int().min(1).max(8).optional(),
  grade: csv,
  family: csv,
  defectType: csv,
  category: csv,
  stage: z.enum(STAGES).optional(),
  minSeverity: z.coerce.number().int().min(1).max(4).optional(),
  cause: z.string().trim().max(40).optional(),
  transition: z.enum(["yes", "no"]).optional(),
  /**
   * Risk bands (high, raised, usual): the slabs whose highest band under the switched-on risk models
   * is one of these — the models for the chosen defect types or categories when there are such, else
   * every switched-on model. Only slabs the models have scored take part.
   */
  riskBand: csv.refine((v) => v.every((b) => (RISK_BANDS as readonly string[]).includes(b)), { message: "A risk band is high, raised or usual." }),
});
export type ReportFilters = z.output<typeof reportFiltersSchema>;

export const variableKeySchema = z.enum(VARIABLE_KEYS as [string, ...string[]], {
  error: (issue) => `Unknown variable${issue.input ? ` “${String(issue.input)}”` : ""}. See GET /api/reports/variables.`,
});

const num = z.number().nullable();

export const proportionSchema = z.object({
  slabs: z.number().int(),
  affected: z.number().int(),
  rate: num,
  ciLower: num,
  ciUpper: num,
});

// ---------------------------------------------------------------------------------------------
// Model terms (the adjusted model, rate against a variable, screening)
// ---------------------------------------------------------------------------------------------

const TERM_KEY_SET = new Set<string>(TERM_KEYS);

/** A term's name in the screens' words. */
export function termLabel(key: string): string {
  return VARIABLES.find((v) => v.key === key)?.label ?? CATEGORICAL_LABELS[key as CategoricalKey] ?? key;
}

/** Under this many affected slabs a report warns that its tests have little power (and says so as its last note). */
export const SMALL_AFFECTED = 10;

/** A label inside a sentence: "Casting speed" → "casting speed"; "EMBr current", "SEN depth" stay as they are. */
export const inSentence = (label: string) => (/^[A-Z][a-z]/.test(label) ? label[0]!.toLowerCase() + label.slice(1) : label);

/**
 * Pairs of categorical keys of which the first determines the second (every grade belongs to one
 * family, every strand to one caster): a model holding both has the same columns twice.
 */
const NESTED: [CategoricalKey, CategoricalKey][] = [
  ["grade", "grade_family"],
  ["strand", "caster"],
];

/**
 * Why one model cannot hold these terms together, in words naming both; null when it can. A key
 * named twice, a derived value beside a raw input it is computed from (however indirectly), or a
 * categorical key beside the one it determines: the same information twice, so their effects
 * cannot be told apart.
 */
export function termConflict(keys: string[]): string | null {
  const seen = new Set<string>();
  for (const k of keys) {
    if (seen.has(k)) return `${termLabel(k)} is named twice. Name each condition once (to examine or to adjust for, not both).`;
    seen.add(k);
  }
  for (const k of keys) {
    const raw = rawInputsOf(k).find((r) => seen.has(r));
    if (raw) {
      return `${termLabel(k)} is computed from ${inSentence(termLabel(raw))}: one model cannot hold both (the same information twice, so neither effect could be told apart). Leave one of them out.`;
    }
  }
  for (const [inner, outer] of NESTED) {
    if (seen.has(inner) && seen.has(outer)) {
      return `${termLabel(inner)} determines the ${inSentence(termLabel(outer))} (each belongs to one): one model cannot hold both. Leave one of them out.`;
    }
  }
  return null;
}

/**
 * A comma-separated list of model terms: numeric variables or the categorical keys (grade family,
 * grade, strand, caster, transition, position in the sequence). Absent: the default; given empty,
 * or "none": no term at all.
 */
const termList = (opts: { what: string; max: number; fallback: string[] | null; allowNone: boolean }) =>
  z
    .string()
    .trim()
    .max(400)
    .optional()
    .transform((raw, ctx) => {
      if (raw === undefined) {
        // Marked, so a default never collides with a key the engineer named elsewhere (see effectiveTerms).
        if (opts.fallback) return Object.defineProperty([...opts.fallback], "defaulted", { value: true }) as string[];
        ctx.addIssue({ code: "custom", message: `Name ${opts.what} (comma-separated keys, e.g. casting_speed_m_min,mold_level_sd_mm).` });
        return z.NEVER;
      }
      const keys = raw
        .split(",")
        .map((s) => s.trim())
        .filter(Boolean);
      if (opts.allowNone && (keys.length === 0 || (keys.length === 1 && keys[0]!.toLowerCase() === "none"))) return [];
      if (keys.length === 0) {
        ctx.addIssue({ code: "custom", message: `Name ${opts.what}: at least one.` });
        return z.NEVER;
      }
      const unknown = keys.filter((k) => !TERM_KEY_SET.has(k));
      if (unknown.length > 0) {
        ctx.addIssue({
          code: "custom",
          message: `Unknown condition${unknown.length === 1 ? "" : "s"} ${unknown
            .slice(0, 3)
            .map((k) => `“${k.slice(0, 40)}”`)
            .join(", ")} in ${opts.what}. Use the keys of GET /api/reports/variables or ${CATEGORICAL_KEYS.join(", ")}.`,
        });
        return z.NEVER;
      }
      if (keys.length > opts.max) {
        ctx.addIssue({ code: "custom", message: `At most ${opts.max} keys in ${opts.what} (${keys.length} given).` });
        return z.NEVER;
      }
      return keys;
    });

const seField = z
  .enum(["cluster", "model"], {
    error: () => "se is cluster (heat-clustered, cluster-robust standard errors) or model (model-based, slabs taken as independent).",
  })
  .default("cluster");

/**
 * The terms of a list as the model uses them: a list left at its default drops the keys already
 * named in the lists before it (examining grade family leaves the default adjustment empty).
 */
export function effectiveTerms(list: string[], before: string[]): string[] {
  return (list as string[] & { defaulted?: boolean }).defaulted ? list.filter((k) => !before.includes(k)) : list;
}

/**
 * Adds the refusal of terms one model cannot hold together to a query schema's checks: the lists
 * in order, the refusal named under the last list that takes part in the conflict.
 */
const refuseConflicts = (listsOf: (q: Record<string, unknown>) => [string, string[]][]) => (q: Record<string, unknown>, ctx: z.RefinementCtx) => {
  const lists = listsOf(q).map(
    ([name, keys], i, all) =>
      [
        name,
        effectiveTerms(
          keys,
          all.slice(0, i).flatMap(([, k]) => k),
        ),
      ] as [string, string[]],
  );
  const all = lists.flatMap(([, keys]) => keys);
  const conflict = termConflict(all);
  if (!conflict) return;
  // The first list whose keys alone are enough for the conflict, else the last one.
  let path = lists[lists.length - 1]![0];
  for (let i = 0; i < lists.length; i++) {
    if (termConflict(lists.slice(0, i + 1).flatMap(([, keys]) => keys))) {
      path = lists[i]![0];
      break;
    }
  }
  ctx.addIssue({ code: "custom", path: [path], message: conflict });
};

/** An odds ratio with its Wald 95 % interval; null where undefined (the reason is given beside it). */
const oddsRatioWithInterval = z.object({ oddsRatio: num, ciLower: num, ciUpper: num });

/** Crude against adjusted (Maldonado & Greenland 1993): the relative change and, when above a tenth, a sentence. */
const changeInEstimateSchema = z.object({
  /** (crude − adjusted) / adjusted, of the odds ratios per the catalogue's readable step (per level for a categorical term). */
  relativeChange: num,
  differs: z.boolean().nullable(),
  sentence: z.string().nullable(),
});

const termRef = z.object({ key: z.string(), label: z.string(), unit: z.string().nullable(), kind: z.enum(["numeric", "categorical"]) });

// ---------------------------------------------------------------------------------------------
// Rate against a variable
// ---------------------------------------------------------------------------------------------

export const rateByVariableQuerySchema = reportFiltersSchema
  .extend({
    variable: variableKeySchema,
    bins: z.coerce.number().int().min(2).max(40).default(10),
    binning: z.enum(["equal", "quantile"]).default("equal"),
    minN: z.coerce.number().int().min(1).max(10_000).default(30),
    /** Terms to adjust the odds ratio for (absent, empty or "none": no adjusted answer, the crude one only). */
    adjustFor: termList({ what: "the conditions to adjust for (adjustFor)", max: 8, fallback: [], allowNone: true }),
    /** One categorical key: the rates by the same bins and the odds ratio within each of its levels. */
    stratifyBy: z
      .enum(CATEGORICAL_KEYS, { error: () => `stratifyBy takes one of ${CATEGORICAL_KEYS.join(", ")} (the groups to draw a curve for).` })
      .optional(),
    /** Standard errors of the adjusted, crude-beside-it and per-stratum odds ratios (not of the `logistic` block, which keeps its model-based SEs). */
    se: seField,
  })
  .superRefine(
    refuseConflicts((q) => [
      ["variable", [q.variable as string]],
      ["adjustFor", q.adjustFor as string[]],
    ]),
  );

/** A logistic slope per one unit of the variable, its odds ratio per unit and per the catalogue's readable step, and the Wald p. */
const slopeFit = z.object({
  /** Log odds per one unit. */
  slope: num,
  se: num,
  /** Per one unit, with its Wald 95 % interval. */
  oddsRatio: num,
  oddsRatioCiLower: num,
  oddsRatioCiUpper: num,
  p: num,
  /** The same odds ratio per the catalogue's readable step (per 0.1 m/min, per 100 A …). */
  perStep: oddsRatioWithInterval.extend({ step: z.number() }),
});

const distribution = z.object({
  n: z.number().int(),
  min: num,
  q1: num,
  median: num,
  q3: num,
  max: num,
  mean: num,
});

export const rateByVariableSchema = z.object({
  variable: z.object({ key: z.string(), label: z.string(), unit: z.string() }),
  slabs: z.number().int(),
  affected: z.number().int(),
  /** Slabs in the filters that have no value for the variable (left out). */
  slabsWithoutValue: z.number().int(),
  bins: z.array(
    z.object({
      lower: z.number(),
      upper: z.number(),
      slabs: z.number().int(),
      affected: z.number().int(),
      rate: z.number(),
      ciLower: z.number(),
      ciUpper: z.number(),
    }),
  ),
  spearman: z.object({ rho: num, p: num }),
  pointBiserial: z.object({ r: num, p: num }),
  logistic: z.object({
    intercept: num,
    slope: num,
    oddsRatio: num,
    oddsRatioCiLower: num,
    oddsRatioCiUpper: num,
    /** The same odds ratio per the catalogue's readable step (per 0.01 wt %, per 100 A …): what the screen leads with. */
    perStep: oddsRatioWithInterval.extend({ step: z.number() }),
    p: num,
    converged: z.boolean(),
  }),
  mannWhitney: z.object({ u: num, p: num }),
  distribution: z.object({ affected: distribution, sound: distribution }),
  /** A few hundred values per group, evenly through the distribution, for a strip plot. */
  strip: z.object({ affected: z.array(z.number()), sound: z.array(z.number()) }),
  /** With adjustFor: the variable's odds ratio in a model with the adjustment terms, and the crude one (same slabs, same SEs) beside it. */
  adjusted: slopeFit
    .extend({
      seMethod: z.enum(["cluster", "model"]),
      adjustFor: z.array(termRef),
      /** Slabs in the model: with a value for the variable and every numeric adjustment term. */
      slabs: z.number().int(),
      affected: z.number().int(),
      heats: z.number().int(),
      /** The variable alone on the same slabs with the same standard errors. */
      crude: slopeFit,
      changeInEstimate: changeInEstimateSchema,
      /** Why the adjusted estimate is null (separation, no spread …); null when it is given. */
      reason: z.string().nullable(),
      /** The note among the report's notes that says the adjusted estimate is not given, and why (a screen saying it elsewhere leaves it out of the list). */
      reasonNote: z.string().nullable(),
    })
    .optional(),
  /** With stratifyBy: per level, the rate in the same bins as above and the odds ratio within the level. */
  stratified: z
    .object({
      by: z.object({ key: z.string(), label: z.string() }),
      seMethod: z.enum(["cluster", "model"]),
      strata: z.array(
        proportionSchema.extend({
          label: z.string(),
          /** The bins of the whole (same edges), each with this level's slabs; `sparse` below minN. */
          bins: z.array(proportionSchema.extend({ lower: z.number(), upper: z.number(), sparse: z.boolean() })),
          /** The variable alone within this level. */
          logistic: slopeFit.extend({ reason: z.string().nullable() }),
        }),
      ),
      /** Levels beyond the twelve largest, not drawn. */
      notShown: z.array(z.object({ label: z.string(), slabs: z.number().int() })),
    })
    .optional(),
  methods: z.record(z.string(), z.string()),
  notes: z.array(z.string()),
});
export type RateByVariable = z.infer<typeof rateByVariableSchema>;

// ---------------------------------------------------------------------------------------------
// Screening
// ---------------------------------------------------------------------------------------------

export const screeningQuerySchema = reportFiltersSchema
  .extend({
    minN: z.coerce.number().int().min(1).max(10_000).default(30),
    /** Terms every variable's adjusted test is adjusted for; absent: grade family; empty or "none": crude only. */
    adjustFor: termList({ what: "the conditions to adjust for (adjustFor)", max: 8, fallback: ["grade_family"], allowNone: true }),
    se: seField,
    /** Rank by the BH-adjusted p of the adjusted tests (the default when there is an adjustment) or of the crude ones. */
    rankBy: z.enum(["adjusted", "crude"], { error: () => "rankBy is adjusted (the tests adjusted for adjustFor) or crude." }).default("adjusted"),
  })
  .superRefine(refuseConflicts((q) => [["adjustFor", q.adjustFor as string[]]]));

export const screeningSchema = z.object({
  slabs: z.number().int(),
  affected: z.number().int(),
  variables: z.array(
    z.object({
      key: z.string(),
      label: z.string(),
      kind: z.enum(["numeric", "categorical"]),
      n: z.number().int(),
      /** Welch t for numeric variables, X² for categorical ones. */
      statistic: num,
      df: num,
      p: num,
      pAdjusted: num,
      /** Numeric: mean among affected minus mean among sound slabs (in the variable's unit). */
      effect: num,
      meanAffected: num,
      meanSound: num,
      /** Categorical: the rate in each category. */
      categories: z.array(z.object({ label: z.string(), slabs: z.number().int(), affected: z.number().int(), rate: num })).optional(),
      method: z.string(),
      fewSlabs: z.boolean(),
      /** False when nothing can be tested (no spread, one category …); the reason says why. Not counted in BH. */
      testable: z.boolean(),
      reason: z.string().nullable(),
      /** A derived value is listed under the raw condition it comes from (its first raw input) and is not a hypothesis of its own in BH. */
      parent: z.string().nullable(),
      /** Every raw condition a derived value is computed from; empty for a raw one. */
      derivedFrom: z.array(z.string()),
      /** Whether this variable's tests count in the Benjamini–Hochberg adjustment (raw conditions actually tested). */
      countedInBh: z.boolean(),
      /** Numeric: the interquartile range (type 7 quartiles of the slabs' values), in the variable's unit. */
      iqr: num,
      /** Numeric: the variable alone, odds ratio per IQR with its Wald 95 % interval and p (same SEs as the adjusted one). */
      crude: z.object({ oddsRatioPerIqr: num, ciLower: num, ciUpper: num, p: num }).nullable(),
      /**
       * The test adjusted for adjustFor (null when nothing is adjusted for): numeric, the odds ratio per
       * IQR in the model; categorical, the variable's test over its levels. pAdjusted is BH over the
       * adjusted tests actually made.
       */
      adjusted: z
        .object({
          oddsRatioPerIqr: num,
          ciLower: num,
          ciUpper: num,
          p: num,
          pAdjusted: num,
          /** z (numeric) or chi-square (categorical). */
          statistic: num,
          df: num,
          test: z.string(),
          reason: z.string().nullable(),
        })
        .nullable(),
    }),
  ),
  adjustFor: z.array(termRef),
  seMethod: z.enum(["cluster", "model"]),
  rankBy: z.enum(["adjusted", "crude"]),
  /** How many tests each Benjamini–Hochberg adjustment counts (its m). */
  tests: z.object({ crude: z.number().int(), adjusted: z.number().int() }),
  methods: z.record(z.string(), z.string()),
  notes: z.array(z.string()),
});
export type Screening = z.infer<typeof screeningSchema>;

// ---------------------------------------------------------------------------------------------
// Adjusted model
// ---------------------------------------------------------------------------------------------

export const adjustedQuerySchema = reportFiltersSchema
  .extend({
    /** 1–8 conditions to examine: numeric variables or categorical keys. */
    variables: termList({ what: "the conditions to examine (variables)", max: 8, fallback: null, allowNone: false }),
    /** 0–8 terms to adjust for; absent: grade family; empty or "none": nothing (crude and adjusted then agree). */
    adjustFor: termList({ what: "the conditions to adjust for (adjustFor)", max: 8, fallback: ["grade_family"], allowNone: true }),
    se: seField,
    /** Odds ratios per the catalogue's readable step of each variable (per 0.1 m/min …) or per one unit. */
    per: z.enum(["step", "unit"], { error: () => "per is step (a readable step of each condition, e.g. 0.1 m/min) or unit (one unit)." }).default("step"),
  })
  .superRefine(
    refuseConflicts((q) => [
      ["variables", q.variables as string[]],
      ["adjustFor", q.adjustFor as string[]],
    ]),
  );

const estimate = z.object({
  /** Log odds per one unit of the variable (per level against the reference for a categorical term). */
  coef: num,
  se: num,
  oddsRatio: num,
  ciLower: num,
  ciUpper: num,
  /** Wald z test, two-sided, with the model's standard errors. */
  p: num,
});

export const adjustedSchema = z.object({
  /** Slabs in the model: in the filters, with a value for every numeric term. */
  slabs: z.number().int(),
  affected: z.number().int(),
  /** Heats those slabs come from (the clusters of the robust SEs). */
  heats: z.number().int(),
  slabsInFilters: z.number().int(),
  /** Slabs in the filters left out for a missing value (see notes for which condition). */
  slabsLeftOut: z.number().int(),
  seMethod: z.enum(["cluster", "model"]),
  per: z.enum(["step", "unit"]),
  examined: z.array(termRef),
  adjustFor: z.array(termRef),
  /** One row per numeric term, one per level (against the reference) of a categorical term; examined first. */
  terms: z.array(
    z.object({
      variable: z.string(),
      label: z.string(),
      unit: z.string().nullable(),
      kind: z.enum(["numeric", "categorical"]),
      role: z.enum(["examined", "adjustment"]),
      level: z.string().nullable(),
      reference: z.string().nullable(),
      /** The step the odds ratios are per, in the variable's unit (null for a categorical term). */
      step: num,
      /** In words: "per 0.1 m/min", or "CC2 strand 2 against CC2 strand 1". */
      perWords: z.string(),
      /** The variable alone, on the same slabs, with the same standard errors. */
      crude: estimate,
      /** In the model with every other term. */
      adjusted: estimate,
      /** The variable's generalised VIF (Fox & Monette 1992): the ordinary VIF for a numeric term. */
      vif: num,
      changeInEstimate: changeInEstimateSchema,
      /** Why the estimates are null, in words (separation, no spread …). */
      reason: z.string().nullable(),
    }),
  ),
  /** One test per variable (a categorical variable is one test over its levels). */
  variables: z.array(
    z.object({
      variable: z.string(),
      label: z.string(),
      kind: z.enum(["numeric", "categorical"]),
      role: z.enum(["examined", "adjustment"]),
      df: z.number().int(),
      /** The test `p` belongs to: likelihood ratio with model-based SEs; the cluster-robust Wald test with heat-clustered SEs. */
      test: z.enum(["likelihood ratio", "Wald, heat-clustered"]),
      /** Likelihood-ratio chi-square (model-based SEs only: it takes slabs as independent). */
      lrChi2: num,
      /** Wald chi-square with the model's standard errors. */
      waldChi2: num,
      p: num,
      gvif: num,
      /** GVIF^(1/(2·df)), comparable across variables with different df. */
      gvifPerDf: num,
      /** Against the usual thresholds: GVIF^(1/(2·df)) above √5 notable, above √10 serious. */
      collinearity: z.enum(["low", "notable", "serious"]).nullable(),
      /** Where collinearity is notable or serious: the note saying so (also among the notes), for a screen to show beside the variable. */
      collinearityNote: z.string().nullable(),
      levels: z.array(z.object({ level: z.string(), slabs: z.number().int(), affected: z.number().int(), reference: z.boolean() })).optional(),
      reason: z.string().nullable(),
    }),
  ),
  model: z.object({
    converged: z.boolean(),
    iterations: z.number().int(),
    /** Coefficients, the intercept included. */
    parameters: z.number().int(),
    deviance: num,
    nullDeviance: num,
    aic: num,
  }),
  /** Separation or a fit that did not converge, in words (then the adjusted estimates are null). */
  separation: z.object({ terms: z.array(z.string()), description: z.string() }).nullable(),
  /** Why the model could not be fitted at all; null when it was. */
  reason: z.string().nullable(),
  methods: z.record(z.string(), z.string()),
  notes: z.array(z.string()),
});
export type Adjusted = z.infer<typeof adjustedSchema>;

// ---------------------------------------------------------------------------------------------
// Control chart
// ---------------------------------------------------------------------------------------------

/** A date field of a report's own (YYYY-MM-DD); whether the day exists is checked by the server. */
const dayField = (what: string) =>
  z
    .string()
    .trim()
    .max(10)
    .regex(/^\d{4}-\d{2}-\d{2}$/, `Give ${what} as a date, YYYY-MM-DD.`)
    .optional();

/** Rates standardised to the grade-family mix of all slabs in the filters (the only mix offered). */
const standardiseField = z
  .enum(["grade_family"], { error: () => "standardise takes grade_family: rates standardised to the grade-family mix of the slabs in the filters." })
  .optional();

export const controlChartQuerySchema = reportFiltersSchema.extend({
  period: z.enum(["day", "week"]).default("day"),
  /** p: share of slabs affected; laney: Laney's p′ chart (between-period variation); u: defects per slab. */
  chart: z.enum(["p", "laney", "u"], { error: () => "chart is p (share of slabs affected), laney (Laney p′) or u (defects per slab)." }).default("p"),
  /** Phase I: the limits are estimated on these dates only and applied unchanged to the later periods. */
  baselineFrom: dayField("the first day of the baseline"),
  baselineTo: dayField("the last day of the baseline"),
  /** Western Electric run rules, on unless switched off. */
  rules: z.enum(["on", "off"], { error: () => "rules is on or off (the Western Electric run rules)." }).default("on"),
  standardise: standardiseField,
});

/** A rate directly standardised to a reference mix, with its 95 % interval (null with the reason when undefined). */
const standardisedRate = z.object({ rate: num, ciLower: num, ciUpper: num, reason: z.string().nullable() });
/** The reference mix of a standardisation: each stratum's slabs and its share of the mix. */
const referenceMix = z.array(z.object({ label: z.string(), slabs: z.number().int(), share: z.number() }));
const standardisation = z.object({
  by: z.literal("grade_family"),
  label: z.string(),
  /** In words: which slabs make the reference mix. */
  reference: z.string(),
  referenceMix,
  method: z.string(),
});

export const controlChartSchema = z.object({
  period: z.enum(["day", "week"]),
  chart: z.enum(["p", "laney", "u"]),
  slabs: z.number().int(),
  affected: z.number().int(),
  /** Defects passing the defect filters on these slabs (the u-chart's counts). */
  defects: z.number().int(),
  /** Centre line of the p and Laney charts (p̄ of the baseline when one is given, else of every period shown); null for the u-chart. */
  pBar: num,
  /** Centre line of the chart drawn: p̄, or ū (defects per slab) for the u-chart. */
  centre: num,
  /** The baseline (Phase I) the limits come from; null: every period shown is the baseline (limits from all of them). */
  baseline: z
    .object({
      from: z.string(),
      to: z.string(),
      /** Periods whose slabs fall in the baseline (by week: the weeks holding its first and last day, whole). */
      firstPeriod: z.string().nullable(),
      lastPeriod: z.string().nullable(),
      periods: z.number().int(),
      slabs: z.number().int(),
    })
    .nullable(),
  /**
   * Laney's σ_z from the baseline's moving ranges of z-scores: about 1 when the periods vary as
   * the binomial allows; above 1 with overdispersion (then the p-chart's limits are too narrow and
   * the p′ chart applies). Null for the u-chart or when undefined (reason given).
   */
  overdispersion: z
    .object({
      sigmaZ: num,
      /** Pearson chi-square test that every baseline period has the same share affected (binomial variation only). */
      chi2: num,
      df: num,
      p: num,
      /** True when σ_z > 1 and the chi-square test rejects binomial variation at 5 %: the Laney p′ chart applies. */
      applies: z.boolean(),
      reason: z.string().nullable(),
      note: z.string(),
    })
    .nullable(),
  rules: z.object({
    on: z.boolean(),
    /** Rule number → what it detects. */
    legend: z.record(z.string(), z.string()),
    method: z.string(),
  }),
  standardisation: standardisation.optional(),
  points: z.array(
    z.object({
      period: z.string(),
      slabs: z.number().int(),
      affected: z.number().int(),
      /** Share of the period's slabs affected (on every chart). */
      p: z.number(),
      /** Limits of the plotted value (p, or u for the u-chart). */
      ucl: z.number(),
      lcl: z.number(),
      /** Beyond the limits. */
      outOfControl: z.boolean(),
      defects: z.number().int(),
      /** The plotted value: p, or defects per slab (u). */
      value: num,
      centre: num,
      /** (value − centre) / σ at this point (σ widened by σ_z on the Laney chart). */
      z: num,
      /** before: earlier than the baseline (limits applied); baseline: Phase I; monitoring: after the baseline (Phase II). */
      phase: z.enum(["before", "baseline", "monitoring"]),
      /** Western Electric rules this point completes (1–4); empty when none or rules are off. */
      signals: z.array(z.number().int()),
      standardised: standardisedRate.optional(),
    }),
  ),
  method: z.string(),
  notes: z.array(z.string()),
});
export type ControlChart = z.infer<typeof controlChartSchema>;

// ---------------------------------------------------------------------------------------------
// Overview
// ---------------------------------------------------------------------------------------------

export const overviewQuerySchema = reportFiltersSchema.extend({ period: z.enum(["day", "week", "month"]).default("week"), standardise: standardiseField });

const rateRow = proportionSchema.extend({ defects: z.number().int(), tonnes: z.number(), per100Slabs: num, per1000t: num });

export const overviewSchema = z.object({
  period: z.enum(["day", "week", "month"]),
  totals: rateRow,
  /** With standardise=grade_family, each period also carries its directly standardised rate. */
  periods: z.array(rateRow.extend({ period: z.string(), standardised: standardisedRate.optional() })),
  pareto: z.array(
    z.object({
      code: z.string(),
      name: z.string(),
      defects: z.number().int(),
      slabsAffected: z.number().int(),
      share: z.number(),
      cumulativeShare: z.number(),
    }),
  ),
  byGrade: z.array(proportionSchema.extend({ grade: z.string(), family: z.string() })),
  byStrand: z.array(proportionSchema.extend({ caster: z.string(), strand: z.number().int() })),
  standardisation: standardisation.optional(),
  notes: z.array(z.string()),
});
export type Overview = z.infer<typeof overviewSchema>;

// ---------------------------------------------------------------------------------------------
// Process window
// ---------------------------------------------------------------------------------------------

export const processWindowQuerySchema = reportFiltersSchema.extend({
  x: variableKeySchema,
  y: variableKeySchema,
  xBins: z.coerce.number().int().min(2).max(20).default(6),
  yBins: z.coerce.number().int().min(2).max(20).default(6),
  binning: z.enum(["equal", "quantile"]).default("quantile"),
  minN: z.coerce.number().int().min(1).max(10_000).default(30),
});

export const processWindowSchema = z.object({
  x: z.object({ key: z.string(), label: z.string(), unit: z.string(), edges: z.array(z.number()) }),
  y: z.object({ key: z.string(), label: z.string(), unit: z.string(), edges: z.array(z.number()) }),
  minN: z.number().int(),
  slabs: z.number().int(),
  affected: z.number().int(),
  /** Empty when no slab in the filters has both values (then there are no bins, so no cell and no bound). */
  cells: z.array(
    proportionSchema.extend({
      xi: z.number().int(),
      yi: z.number().int(),
      xLower: z.number(),
      xUpper: z.number(),
      yLower: z.number(),
      yUpper: z.number(),
      /** Fewer slabs than minN: shown greyed, not to be read. */
      sparse: z.boolean(),
    }),
  ),
  notes: z.array(z.string()),
});
export type ProcessWindow = z.infer<typeof processWindowSchema>;

// ---------------------------------------------------------------------------------------------
// Before and after
// ---------------------------------------------------------------------------------------------

export const beforeAfterQuerySchema = reportFiltersSchema.extend({
  mode: z.enum(["periods", "variable"]).default("periods"),
  aFrom: z.string().trim().max(10).optional(),
  aTo: z.string().trim().max(10).optional(),
  bFrom: z.string().trim().max(10).optional(),
  bTo: z.string().trim().max(10).optional(),
  variable: variableKeySchema.optional(),
  aMin: z.coerce.number().optional(),
  aMax: z.coerce.number().optional(),
  bMin: z.coerce.number().optional(),
  bMax: z.coerce.number().optional(),
  /** Compare A and B within the levels of one categorical key (grade family offered first). */
  stratifyBy: z.enum(CATEGORICAL_KEYS, { error: () => `stratifyBy takes one of ${CATEGORICAL_KEYS.join(", ")} (the groups to compare within).` }).optional(),
});

const count = z.object({ slabs: z.number().int(), affected: z.number().int(), rate: num });

export const beforeAfterSchema = z.object({
  mode: z.enum(["periods", "variable"]),
  a: proportionSchema.extend({ label: z.string() }),
  b: proportionSchema.extend({ label: z.string() }),
  /** Rate of B minus rate of A, with its interval. */
  difference: z.object({ value: num, lower: num, upper: num, method: z.string() }),
  /** "none" (p null, reason given) when a group has no slab or no slab of either group is affected. */
  test: z.object({ name: z.enum(["fisher", "chi-square", "none"]), p: num, method: z.string(), reason: z.string().nullable() }),
  /** With stratifyBy: A and B compared within each level. A is the reference group: odds ratios are B against A. */
  stratified: z
    .object({
      by: z.object({ key: z.string(), label: z.string() }),
      reference: z.literal("A"),
      strata: z.array(
        z.object({
          label: z.string(),
          a: count,
          b: count,
          /** Rate of B minus rate of A in this stratum (Newcombe hybrid score interval). */
          difference: z.object({ value: num, lower: num, upper: num }),
          /** Odds of B over odds of A in this stratum (Woolf interval; 0.5 added to every cell when one is zero). */
          oddsRatio: num,
          ciLower: num,
          ciUpper: num,
          zeroCellCorrection: z.boolean(),
          reason: z.string().nullable(),
        }),
      ),
      /** Odds ratio B against A of the tables added together (ignoring the strata), Woolf interval. */
      crude: z.object({ oddsRatio: num, ciLower: num, ciUpper: num }),
      mantelHaenszel: z.object({
        oddsRatio: num,
        ciLower: num,
        ciUpper: num,
        /** Cochran–Mantel–Haenszel chi-square (1 df) and its p. */
        chi2: num,
        p: num,
        informativeStrata: z.number().int(),
        continuityCorrection: z.boolean(),
        reason: z.string().nullable(),
      }),
      breslowDay: z.object({
        chi2: num,
        df: num,
        p: num,
        uncorrected: num,
        tarone: z.boolean(),
        smallExpected: z.number().int(),
        reason: z.string().nullable(),
      }),
      standardised: z.object({
        rateA: num,
        rateB: num,
        /** rate B − rate A, both standardised to the same reference mix */
        difference: num,
        ciLower: num,
        ciUpper: num,
        reason: z.string().nullable(),
        /** In words: which slabs make the reference mix. */
        reference: z.string(),
        referenceMix,
        /** Strata left out of the reference mix because only one group has slabs there. */
        leftOut: z.array(z.object({ label: z.string(), group: z.enum(["A", "B"]), slabs: z.number().int() })),
      }),
      /** Plain sentence when the crude and the Mantel–Haenszel odds ratios differ by more than a tenth. */
      changeInEstimate: z.object({ relativeChange: num, differs: z.boolean().nullable(), sentence: z.string().nullable() }),
      methods: z.record(z.string(), z.string()),
      notes: z.array(z.string()),
    })
    .optional(),
  notes: z.array(z.string()),
});
export type BeforeAfter = z.infer<typeof beforeAfterSchema>;

// ---------------------------------------------------------------------------------------------
// Where on the slab
// ---------------------------------------------------------------------------------------------

export const slabPositionsQuerySchema = reportFiltersSchema.extend({
  alongBins: z.coerce.number().int().min(2).max(50).default(10),
  acrossBins: z.coerce.number().int().min(2).max(20).default(5),
});

export const slabPositionsSchema = z.object({
  defects: z.number().int(),
  slabs: z.number().int(),
  byFace: z.array(z.object({ face: z.string(), defects: z.number().int() })),
  /** Counts by position as a fraction of the slab's length (0 = head end) and of the face's width. */
  grid: z.array(
    z.object({
      face: z.string(),
      along: z.array(z.number().int()),
      across: z.array(z.number().int()),
      cells: z.array(z.array(z.number().int())),
    }),
  ),
  alongEdges: z.array(z.number()),
  acrossEdges: z.array(z.number()),
});
export type SlabPositions = z.infer<typeof slabPositionsSchema>;

// ---------------------------------------------------------------------------------------------
// Saved reports
// ---------------------------------------------------------------------------------------------

export const REPORT_KINDS = [
  "overview",
  "rate-by-variable",
  "screening",
  "process-window",
  "control-chart",
  "before-after",
  "slab-positions",
  "cause-pareto",
  "adjusted",
] as const;
export const reportKindSchema = z.enum(REPORT_KINDS);

export const savedReportSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  reportKind: reportKindSchema,
  query: z.string(),
  createdAt: z.string(),
});
export const savedReportInputSchema = z.object({
  name: z.string().trim().min(1, "Name the report.").max(120),
  reportKind: reportKindSchema,
  /** The URL query string of the report (without the leading ?). */
  query: z.string().max(2000),
});
