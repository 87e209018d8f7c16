/**
 * The numeric slab-level variables: each slab's resolved casting conditions (its own value, else the
 * aggregate of the process samples cast while it passed the mold, else the heat's value), the values
 * derived from them, and the heat's chemistry. Reports and exports use these keys.
 */
export type VariableGroup = "condition" | "derived" | "chemistry" | "geometry";

export interface VariableSpec {
  key: string;
  label: string;
  unit: string;
  group: VariableGroup;
  /** Decimals to show. */
  digits: number;
  description: string;
  /**
   * A step a person reads an odds ratio per (per 0.1 m/min, per 100 A, per 10 °C): the change in the
   * condition a plant would actually make or see [practice]. "Per unit" stays available.
   */
  step: number;
  /**
   * For a derived value, the variables it is computed from (directly). A model may not hold a
   * derived value next to any of them: it would be the same information twice.
   */
  derivedFrom?: string[];
}

export const VARIABLES: VariableSpec[] = [
  {
    key: "casting_speed_m_min",
    label: "Casting speed",
    unit: "m/min",
    group: "condition",
    digits: 2,
    description: "Mean speed while the slab was cast.",
    step: 0.1,
  },
  {
    key: "speed_change_m_min",
    label: "Speed change",
    unit: "m/min",
    group: "condition",
    digits: 2,
    description: "Highest minus lowest sampled speed while the slab was cast (samples only).",
    step: 0.1,
  },
  { key: "superheat_c", label: "Superheat", unit: "°C", group: "condition", digits: 1, description: "Tundish temperature minus liquidus.", step: 10 },
  { key: "embr_current_a", label: "EMBr current", unit: "A", group: "condition", digits: 0, description: "Brake coil current (0 = off).", step: 100 },
  { key: "sen_depth_mm", label: "SEN depth", unit: "mm", group: "condition", digits: 0, description: "SEN immersion depth.", step: 10 },
  { key: "argon_nl_min", label: "Argon flow", unit: "NL/min", group: "condition", digits: 1, description: "Argon to the SEN.", step: 1 },
  {
    key: "mold_level_sd_mm",
    label: "Mold level fluctuation (s.d.)",
    unit: "mm",
    group: "condition",
    digits: 2,
    description: "Standard deviation of the mold level.",
    step: 1,
  },
  {
    key: "throughput_t_min",
    label: "Throughput",
    unit: "t/min",
    group: "derived",
    digits: 2,
    description: "ρ · v · W · T.",
    step: 0.5,
    derivedFrom: ["casting_speed_m_min", "width_mm"],
  },
  {
    key: "shell_exit_mm",
    label: "Shell at mold exit",
    unit: "mm",
    group: "derived",
    digits: 1,
    description: "K · √(mold dwell time).",
    step: 1,
    derivedFrom: ["casting_speed_m_min"],
  },
  {
    key: "embr_field_t",
    label: "EMBr field",
    unit: "T",
    group: "derived",
    digits: 3,
    description: "Field from the coil current through the strand's calibration.",
    step: 0.1,
    derivedFrom: ["embr_current_a"],
  },
  {
    key: "stuart_number",
    label: "Interaction (Stuart) number",
    unit: "–",
    group: "derived",
    digits: 2,
    description: "σ B² L / (ρ U), L half the thickness, U the SEN port velocity.",
    step: 0.5,
    derivedFrom: ["embr_field_t", "sen_port_velocity_m_s"],
  },
  {
    key: "sen_port_velocity_m_s",
    label: "SEN port velocity",
    unit: "m/s",
    group: "derived",
    digits: 2,
    description: "Liquid volume flow over the SEN port area.",
    step: 0.1,
    derivedFrom: ["casting_speed_m_min", "width_mm"],
  },
  {
    key: "metallurgical_length_m",
    label: "Metallurgical length",
    unit: "m",
    group: "derived",
    digits: 1,
    description: "v · (T / 2K)².",
    step: 1,
    derivedFrom: ["casting_speed_m_min"],
  },
  { key: "width_mm", label: "Slab width", unit: "mm", group: "geometry", digits: 0, description: "Slab width.", step: 100 },
  { key: "c_pct", label: "Carbon", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis.", step: 0.01 },
  { key: "mn_pct", label: "Manganese", unit: "wt %", group: "chemistry", digits: 2, description: "Heat analysis.", step: 0.1 },
  { key: "si_pct", label: "Silicon", unit: "wt %", group: "chemistry", digits: 2, description: "Heat analysis.", step: 0.1 },
  { key: "s_pct", label: "Sulphur", unit: "wt %", group: "chemistry", digits: 4, description: "Heat analysis.", step: 0.001 },
  { key: "al_pct", label: "Aluminium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis.", step: 0.01 },
  { key: "nb_pct", label: "Niobium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis.", step: 0.01 },
  { key: "ti_pct", label: "Titanium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis.", step: 0.01 },
  { key: "n_ppm", label: "Nitrogen", unit: "ppm", group: "chemistry", digits: 0, description: "Heat analysis.", step: 10 },
];

export const VARIABLE_KEYS = VARIABLES.map((v) => v.key);

/** Every variable a derived one is computed from, however indirectly (stuart_number → embr_current_a …). */
export function rawInputsOf(key: string): string[] {
  const out = new Set<string>();
  const walk = (k: string) => {
    for (const parent of VARIABLES.find((v) => v.key === k)?.derivedFrom ?? []) {
      if (out.has(parent)) continue;
      out.add(parent);
      walk(parent);
    }
  };
  walk(key);
  return [...out];
}

/**
 * The slab's place and kind, usable as categorical terms of a model (to adjust for, to stratify by,
 * or to examine). Each level is compared with a reference level (the most common one).
 */
export const CATEGORICAL_KEYS = ["grade_family", "grade", "strand", "caster", "transition", "sequence_position"] as const;
export type CategoricalKey = (typeof CATEGORICAL_KEYS)[number];
export const CATEGORICAL_LABELS: Record<CategoricalKey, string> = {
  grade_family: "Grade family",
  grade: "Grade",
  strand: "Strand",
  caster: "Caster",
  transition: "Transition slab",
  sequence_position: "Position in sequence",
};
/** Every key a model term may name: a numeric variable or a categorical one. */
export const TERM_KEYS = [...VARIABLE_KEYS, ...CATEGORICAL_KEYS];

/** Where a resolved value came from. */
export const CONDITION_SOURCES = ["slab", "samples", "heat"] as const;
export type ConditionSource = (typeof CONDITION_SOURCES)[number];
export const CONDITION_SOURCE_LABELS: Record<ConditionSource, string> = {
  slab: "given for the slab",
  samples: "from process samples",
  heat: "heat value",
};
