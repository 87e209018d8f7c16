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
}

export const VARIABLES: VariableSpec[] = [
  { key: "casting_speed_m_min", label: "Casting speed", unit: "m/min", group: "condition", digits: 2, description: "Mean speed while the slab was cast." },
  { key: "speed_change_m_min", label: "Speed change", unit: "m/min", group: "condition", digits: 2, description: "Highest minus lowest sampled speed while the slab was cast (samples only)." },
  { key: "superheat_c", label: "Superheat", unit: "°C", group: "condition", digits: 1, description: "Tundish temperature minus liquidus." },
  { key: "embr_current_a", label: "EMBr current", unit: "A", group: "condition", digits: 0, description: "Brake coil current (0 = off)." },
  { key: "sen_depth_mm", label: "SEN depth", unit: "mm", group: "condition", digits: 0, description: "SEN immersion depth." },
  { key: "argon_nl_min", label: "Argon flow", unit: "NL/min", group: "condition", digits: 1, description: "Argon to the SEN." },
  { key: "mold_level_sd_mm", label: "Mold level fluctuation (s.d.)", unit: "mm", group: "condition", digits: 2, description: "Standard deviation of the mold level." },
  { key: "throughput_t_min", label: "Throughput", unit: "t/min", group: "derived", digits: 2, description: "ρ · v · W · T." },
  { key: "shell_exit_mm", label: "Shell at mold exit", unit: "mm", group: "derived", digits: 1, description: "K · √(mold dwell time)." },
  { key: "embr_field_t", label: "EMBr field", unit: "T", group: "derived", digits: 3, description: "Field from the coil current through the strand's calibration." },
  { key: "stuart_number", label: "Interaction (Stuart) number", unit: "–", group: "derived", digits: 2, description: "σ B² L / (ρ U), L half the thickness, U the SEN port velocity." },
  { key: "sen_port_velocity_m_s", label: "SEN port velocity", unit: "m/s", group: "derived", digits: 2, description: "Liquid volume flow over the SEN port area." },
  { key: "metallurgical_length_m", label: "Metallurgical length", unit: "m", group: "derived", digits: 1, description: "v · (T / 2K)²." },
  { key: "width_mm", label: "Slab width", unit: "mm", group: "geometry", digits: 0, description: "Slab width." },
  { key: "c_pct", label: "Carbon", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis." },
  { key: "mn_pct", label: "Manganese", unit: "wt %", group: "chemistry", digits: 2, description: "Heat analysis." },
  { key: "si_pct", label: "Silicon", unit: "wt %", group: "chemistry", digits: 2, description: "Heat analysis." },
  { key: "s_pct", label: "Sulphur", unit: "wt %", group: "chemistry", digits: 4, description: "Heat analysis." },
  { key: "al_pct", label: "Aluminium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis." },
  { key: "nb_pct", label: "Niobium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis." },
  { key: "ti_pct", label: "Titanium", unit: "wt %", group: "chemistry", digits: 3, description: "Heat analysis." },
  { key: "n_ppm", label: "Nitrogen", unit: "ppm", group: "chemistry", digits: 0, description: "Heat analysis." },
];

export const VARIABLE_KEYS = VARIABLES.map((v) => v.key);

/** Where a resolved value came from. */
export const CONDITION_SOURCES = ["slab", "samples", "heat"] as const;
export type ConditionSource = (typeof CONDITION_SOURCES)[number];
export const CONDITION_SOURCE_LABELS: Record<ConditionSource, string> = {
  slab: "given for the slab",
  samples: "from process samples",
  heat: "heat value",
};
