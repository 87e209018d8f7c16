import { z } from "zod";
import { VARIABLES } from "../variables";

/**
 * Operating windows (issue 15): plain rules a process engineer writes per grade family, e.g.
 * "casting speed above 1.6 m/min with EMBr current below 150 A". A slab whose resolved conditions
 * meet every condition of a live rule is flagged with the rule's name. Each rule keeps a record on
 * history: how many slabs it flagged and what share of them carried the defect against the rest,
 * with Wilson intervals, so the plant learns which rules earn their keep. A flag is an association,
 * never a cause, and never clears or condemns a slab.
 */

export const WINDOW_OPS = ["above", "below"] as const;
export type WindowOp = (typeof WINDOW_OPS)[number];

/** At most this many conditions per rule; all of them must hold for a slab to be flagged. */
export const MAX_WINDOW_CONDITIONS = 4;
/** At most this many live rules: each one is checked on every slab shown and on a year of history. */
export const MAX_LIVE_WINDOWS = 100;
/** A rule's record covers slabs cast in the last this many days unless `from`/`to` say otherwise. */
export const WINDOW_RECORD_DAYS = 365;
/** The flags of at most this many slabs per request. */
export const MAX_FLAG_SLABS = 200;
/** Values of a condition are bounded (no variable of the catalogue comes near these). */
export const WINDOW_VALUE_LIMIT = 100_000;

const variableKeys = VARIABLES.map((v) => v.key) as [string, ...string[]];

export const windowConditionSchema = z.object({
  variable: z.enum(variableKeys, { error: "Unknown condition: choose one of the casting conditions, derived values or chemistry of the list." }),
  op: z.enum(WINDOW_OPS, { error: "The comparison is “above” or “below”." }),
  value: z
    .number({ error: "Give the value as a number." })
    .min(-WINDOW_VALUE_LIMIT, `The value must lie between −${WINDOW_VALUE_LIMIT} and ${WINDOW_VALUE_LIMIT}.`)
    .max(WINDOW_VALUE_LIMIT, `The value must lie between −${WINDOW_VALUE_LIMIT} and ${WINDOW_VALUE_LIMIT}.`),
});
export type WindowCondition = z.infer<typeof windowConditionSchema>;

export const windowTargetSchema = z.object({
  kind: z.enum(["type", "category"], { error: "The defect is a type or a category." }),
  code: z.string().trim().min(1, "Choose the defect.").max(40),
});

export const windowConditionsSchema = z
  .array(windowConditionSchema)
  .min(1, "Give at least one condition.")
  .max(MAX_WINDOW_CONDITIONS, `At most ${MAX_WINDOW_CONDITIONS} conditions per rule.`)
  .refine((cs) => new Set(cs.map((c) => `${c.variable}:${c.op}`)).size === cs.length, {
    message: "The same condition is given twice (same variable, same comparison).",
  })
  .refine((cs) => !cs.some((a) => a.op === "above" && cs.some((b) => b.variable === a.variable && b.op === "below" && b.value <= a.value)), {
    message: "A variable is asked to be above a value and below a smaller one: no slab could ever meet the rule.",
  });

const fields = {
  name: z.string().trim().min(2, "Give the rule a name of at least 2 characters.").max(80, "The name is at most 80 characters."),
  /** The grade family (code) the rule watches; null: every family. */
  familyCode: z.string().trim().min(1).max(40).nullable(),
  /** The defect the rule is meant to keep away; null: any defect. */
  target: windowTargetSchema.nullable(),
  conditions: windowConditionsSchema,
  note: z.string().trim().max(500, "The note is at most 500 characters.").nullable(),
};

/** POST /api/operating-windows */
export const createWindowSchema = z.object({
  name: fields.name,
  familyCode: fields.familyCode.default(null),
  target: fields.target.default(null),
  conditions: fields.conditions,
  note: fields.note.optional(),
});
export type CreateWindowBody = z.input<typeof createWindowSchema>;

/** PATCH /api/operating-windows/:id — the fields given are replaced. */
export const updateWindowSchema = z
  .object({
    name: fields.name.optional(),
    familyCode: fields.familyCode.optional(),
    target: fields.target.optional(),
    conditions: fields.conditions.optional(),
    note: fields.note.optional(),
  })
  .refine((b) => Object.values(b).some((v) => v !== undefined), { message: "Nothing to change." });
export type UpdateWindowBody = z.input<typeof updateWindowSchema>;

export const windowParamsSchema = z.object({ id: z.coerce.number().int().positive("No such rule.").max(2_147_483_647, "No such rule.") });

export const windowListQuerySchema = z
  .object({
    from: z.iso.date("Give the start as a date (YYYY-MM-DD).").optional(),
    to: z.iso.date("Give the end as a date (YYYY-MM-DD).").optional(),
    includeRetired: z.enum(["true", "false"]).optional(),
  })
  .refine((q) => !q.from || !q.to || q.from <= q.to, { message: "The start is after the end.", path: ["from"] });

export const windowFlagsQuerySchema = z
  .object({
    /** The plant's slab ids, comma-separated. */
    slabIds: z.string().trim().min(1).max(4_000, "Too many slab ids: at most 200, comma-separated.").optional(),
    heatNo: z.string().trim().min(1).max(40).optional(),
  })
  .refine((q) => (q.slabIds === undefined) !== (q.heatNo === undefined), { message: "Give either slab ids or a heat number.", path: ["slabIds"] })
  .refine((q) => !q.slabIds || q.slabIds.split(",").filter((s) => s.trim()).length <= MAX_FLAG_SLABS, {
    message: `At most ${MAX_FLAG_SLABS} slabs at once.`,
    path: ["slabIds"],
  });

// Answers --------------------------------------------------------------------------------------

export const shareSchema = z.object({
  slabs: z.number().int(),
  /** Slabs with at least one live, not rejected entry of the target defect. */
  affected: z.number().int(),
  /** affected / slabs; null when there are no slabs. */
  share: z.number().nullable(),
  lower: z.number().nullable(),
  upper: z.number().nullable(),
});
export type WindowShare = z.infer<typeof shareSchema>;

export const WINDOW_VERDICTS = ["more", "less", "no_clear_difference"] as const;

export const windowRecordSchema = z.object({
  /** Cast dates covered (UTC, inclusive). */
  from: z.string(),
  to: z.string(),
  flagged: shareSchema,
  rest: shareSchema,
  /** Slabs of the family in the window with a value the rule needs not recorded: neither flagged nor the rest. */
  unknown: z.number().int(),
  /** flagged share − rest share, with Newcombe's hybrid score interval; null where either group is empty. */
  difference: z.number().nullable(),
  differenceLower: z.number().nullable(),
  differenceUpper: z.number().nullable(),
  /** Whether the two Wilson intervals overlap (null where either is undefined). */
  intervalsOverlap: z.boolean().nullable(),
  verdict: z.enum(WINDOW_VERDICTS).nullable(),
  /** The verdict in words, or why there is none. */
  verdictText: z.string(),
  method: z.string(),
});
export type WindowRecord = z.infer<typeof windowRecordSchema>;

export const windowConditionOutSchema = windowConditionSchema.extend({ label: z.string(), unit: z.string().nullable(), text: z.string() });

export const operatingWindowSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  familyCode: z.string().nullable(),
  familyName: z.string().nullable(),
  target: z.object({ kind: z.enum(["type", "category"]), code: z.string(), name: z.string() }).nullable(),
  conditions: z.array(windowConditionOutSchema),
  /** The conditions in words: "Casting speed above 1.60 m/min and EMBr current below 150 A". */
  text: z.string(),
  note: z.string().nullable(),
  createdByName: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
  retiredAt: z.string().nullable(),
  /** The record on history (null for a retired rule). */
  record: windowRecordSchema.nullable(),
});
export type OperatingWindow = z.infer<typeof operatingWindowSchema>;

export const WINDOW_CAUTION =
  "A flag is an association found in the plant's history, not a cause. It never clears or condemns a slab: every slab is inspected and dispositioned as the plant's procedure requires, and changes to casting practice (speed, brake current, SEN depth, superheat) go through the plant's own change procedure.";

export const windowListSchema = z.object({
  items: z.array(operatingWindowSchema),
  from: z.string(),
  to: z.string(),
  liveLimit: z.number().int(),
  caution: z.string(),
});

export const windowFlagsSchema = z.object({
  items: z.array(z.object({ slabId: z.string(), heatNo: z.string(), rules: z.array(z.object({ id: z.number().int(), name: z.string() })) })),
  caution: z.string(),
});
export type WindowFlags = z.infer<typeof windowFlagsSchema>;

export const retiredWindowSchema = z.object({ id: z.number().int(), retired: z.literal(true), retiredAt: z.string() });

/** "Casting speed above 1.60 m/min" — the condition in words, with the catalogue's label, digits and unit. */
export function conditionText(c: WindowCondition): string {
  const v = VARIABLES.find((x) => x.key === c.variable);
  if (!v) return `${c.variable} ${c.op} ${c.value}`;
  const unit = v.unit === "–" ? "" : ` ${v.unit}`;
  // The catalogue's digits, unless the rule was written finer than that.
  const shown = Number(c.value.toFixed(v.digits)) === c.value ? c.value.toFixed(v.digits) : String(c.value);
  return `${v.label} ${c.op} ${shown}${unit}`;
}

export function conditionsText(cs: WindowCondition[]): string {
  // Inside the sentence "Casting speed" becomes "casting speed"; "EMBr current" and "SEN depth" keep their capitals.
  return cs
    .map((c, i) => (i > 0 && /^[A-Z][a-z]/.test(conditionText(c)) ? conditionText(c)[0]!.toLowerCase() + conditionText(c).slice(1) : conditionText(c)))
    .join(" and ");
}
