import { z } from "zod";
import { STAGES } from "../domain";
import { VARIABLE_KEYS } from "../variables";

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
  .transform((v) => (v ? v.split(",").map((s) => s.trim()).filter(Boolean) : []));

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
// Rate against a variable
// ---------------------------------------------------------------------------------------------

export const rateByVariableQuerySchema = reportFiltersSchema.extend({
  variable: variableKeySchema,
  bins: z.coerce.number().int().min(2).max(40).default(10),
  binning: z.enum(["equal", "quantile"]).default("equal"),
  minN: z.coerce.number().int().min(1).max(10_000).default(30),
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
    p: num,
    converged: z.boolean(),
  }),
  mannWhitney: z.object({ u: num, p: num }),
  distribution: z.object({ affected: distribution, sound: distribution }),
  /** A few hundred values per group, evenly through the distribution, for a strip plot. */
  strip: z.object({ affected: z.array(z.number()), sound: z.array(z.number()) }),
  methods: z.record(z.string(), z.string()),
  notes: z.array(z.string()),
});
export type RateByVariable = z.infer<typeof rateByVariableSchema>;

// ---------------------------------------------------------------------------------------------
// Screening
// ---------------------------------------------------------------------------------------------

export const screeningQuerySchema = reportFiltersSchema.extend({
  minN: z.coerce.number().int().min(1).max(10_000).default(30),
});

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
    }),
  ),
  notes: z.array(z.string()),
});
export type Screening = z.infer<typeof screeningSchema>;

// ---------------------------------------------------------------------------------------------
// Control chart
// ---------------------------------------------------------------------------------------------

export const controlChartQuerySchema = reportFiltersSchema.extend({ period: z.enum(["day", "week"]).default("day") });

export const controlChartSchema = z.object({
  period: z.enum(["day", "week"]),
  slabs: z.number().int(),
  affected: z.number().int(),
  pBar: num,
  points: z.array(
    z.object({
      period: z.string(),
      slabs: z.number().int(),
      affected: z.number().int(),
      p: z.number(),
      ucl: z.number(),
      lcl: z.number(),
      outOfControl: z.boolean(),
    }),
  ),
  method: z.string(),
});
export type ControlChart = z.infer<typeof controlChartSchema>;

// ---------------------------------------------------------------------------------------------
// Overview
// ---------------------------------------------------------------------------------------------

export const overviewQuerySchema = reportFiltersSchema.extend({ period: z.enum(["day", "week", "month"]).default("week") });

const rateRow = proportionSchema.extend({ defects: z.number().int(), tonnes: z.number(), per100Slabs: num, per1000t: num });

export const overviewSchema = z.object({
  period: z.enum(["day", "week", "month"]),
  totals: rateRow,
  periods: z.array(rateRow.extend({ period: z.string() })),
  pareto: z.array(
    z.object({ code: z.string(), name: z.string(), defects: z.number().int(), slabsAffected: z.number().int(), share: z.number(), cumulativeShare: z.number() }),
  ),
  byGrade: z.array(proportionSchema.extend({ grade: z.string(), family: z.string() })),
  byStrand: z.array(proportionSchema.extend({ caster: z.string(), strand: z.number().int() })),
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
});

export const beforeAfterSchema = z.object({
  mode: z.enum(["periods", "variable"]),
  a: proportionSchema.extend({ label: z.string() }),
  b: proportionSchema.extend({ label: z.string() }),
  /** Rate of B minus rate of A, with its interval. */
  difference: z.object({ value: num, lower: num, upper: num, method: z.string() }),
  test: z.object({ name: z.enum(["fisher", "chi-square"]), p: num, method: z.string() }),
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

export const REPORT_KINDS = ["overview", "rate-by-variable", "screening", "process-window", "control-chart", "before-after", "slab-positions", "cause-pareto"] as const;
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
