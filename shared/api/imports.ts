import { z } from "zod";

/**
 * The machine keys of the heat, slab and process-sample files (workbook imports and the level-2 feed).
 * Headers match case-insensitively; the unit is part of the key. The template workbook and the import
 * screen describe the columns from this one list.
 */
export const IMPORT_KINDS = ["heats", "slabs", "process-samples", "products"] as const;
export const importKindSchema = z.enum(IMPORT_KINDS);
export type ImportKind = z.infer<typeof importKindSchema>;

export type ColumnType = "text" | "number" | "integer" | "datetime" | "boolean";

export interface ColumnSpec {
  key: string;
  required: boolean;
  type: ColumnType;
  unit?: string;
  /** Physical bounds, inclusive. */
  min?: number;
  max?: number;
  description: string;
}

const chem = (el: string, name: string, max = 100): ColumnSpec => ({
  key: `${el}_pct`,
  required: false,
  type: "number",
  unit: "wt %",
  min: 0,
  max,
  description: `${name} content of the heat (ladle or tundish analysis).`,
});

const conditionColumns = (level: "heat" | "slab"): ColumnSpec[] => [
  {
    key: "casting_speed_m_min",
    required: level === "heat",
    type: "number",
    unit: "m/min",
    min: 0.1,
    max: 10,
    description: level === "heat" ? "Mean casting speed of the heat." : "Casting speed while this slab was cast, when the level-2 system gives it per slab.",
  },
  ...(level === "heat"
    ? ([
        { key: "tundish_temp_c", required: false, type: "number", unit: "°C", min: 1350, max: 1700, description: "Mean tundish temperature." },
        {
          key: "liquidus_c",
          required: false,
          type: "number",
          unit: "°C",
          min: 1300,
          max: 1600,
          description: "Liquidus temperature; computed from the chemistry with the plant's coefficients when empty.",
        },
      ] satisfies ColumnSpec[])
    : []),
  {
    key: "superheat_c",
    required: false,
    type: "number",
    unit: "°C",
    min: -10,
    max: 150,
    description: "Tundish temperature minus liquidus; computed when empty.",
  },
  { key: "embr_current_a", required: false, type: "number", unit: "A", min: 0, max: 5000, description: "Electromagnetic brake coil current (0 = brake off)." },
  { key: "sen_depth_mm", required: false, type: "number", unit: "mm", min: 0, max: 500, description: "SEN immersion depth below the meniscus." },
  { key: "argon_nl_min", required: false, type: "number", unit: "NL/min", min: 0, max: 100, description: "Argon flow to the SEN." },
  { key: "mold_level_sd_mm", required: false, type: "number", unit: "mm", min: 0, max: 50, description: "Standard deviation of the mold level." },
];

export const IMPORT_COLUMNS: Record<ImportKind, ColumnSpec[]> = {
  heats: [
    { key: "heat_no", required: true, type: "text", description: "Heat number, unique in the plant. Importing it again updates the heat." },
    { key: "sequence_no", required: false, type: "text", description: "Sequence (cast) the heat belongs to; positions follow the cast start times." },
    { key: "caster", required: true, type: "text", description: "Caster code as set up in Plant setup (e.g. CC2)." },
    { key: "grade", required: true, type: "text", description: "Steel grade code as set up in Plant setup." },
    {
      key: "cast_start",
      required: true,
      type: "datetime",
      description: "Start of casting: ISO 8601 (2026-11-03T14:20:00Z) or an Excel date. Without an offset the time is read as UTC.",
    },
    { key: "cast_end", required: false, type: "datetime", description: "End of casting, same formats." },
    { key: "ladle_weight_t", required: false, type: "number", unit: "t", min: 1, max: 500, description: "Liquid steel in the ladle." },
    ...conditionColumns("heat"),
    chem("c", "Carbon"),
    chem("si", "Silicon"),
    chem("mn", "Manganese"),
    chem("p", "Phosphorus"),
    chem("s", "Sulphur"),
    chem("al", "Aluminium"),
    chem("cu", "Copper"),
    chem("ni", "Nickel"),
    chem("cr", "Chromium"),
    chem("mo", "Molybdenum"),
    chem("ti", "Titanium"),
    chem("nb", "Niobium"),
    chem("v", "Vanadium"),
    { key: "n_ppm", required: false, type: "number", unit: "ppm", min: 0, max: 10_000, description: "Nitrogen content." },
  ],
  slabs: [
    { key: "slab_id", required: true, type: "text", description: "Slab id, unique in the plant. Importing it again updates the slab." },
    { key: "heat_no", required: true, type: "text", description: "Heat the slab was cast from; the heat must exist (import heats first)." },
    { key: "strand", required: true, type: "integer", min: 1, max: 8, description: "Strand number on the heat's caster." },
    { key: "piece_no", required: true, type: "integer", min: 1, max: 999, description: "Order of the piece within its heat and strand, from 1." },
    { key: "length_mm", required: true, type: "number", unit: "mm", min: 500, max: 25_000, description: "Slab length." },
    { key: "width_mm", required: true, type: "number", unit: "mm", min: 300, max: 4000, description: "Slab width." },
    { key: "thickness_mm", required: true, type: "number", unit: "mm", min: 50, max: 600, description: "Slab thickness." },
    {
      key: "weight_t",
      required: false,
      type: "number",
      unit: "t",
      min: 0.1,
      max: 100,
      description: "Slab weight; computed from the dimensions and the plant's density when empty.",
    },
    {
      key: "cast_length_start_m",
      required: false,
      type: "number",
      unit: "m",
      min: 0,
      max: 100_000,
      description: "Position of the head end along the strand's cast length since the sequence start.",
    },
    { key: "transition", required: false, type: "boolean", description: "true when the slab was cut across a ladle change (mixed steel)." },
    ...conditionColumns("slab"),
  ],
  "process-samples": [
    { key: "caster", required: true, type: "text", description: "Caster code." },
    { key: "strand", required: true, type: "integer", min: 1, max: 8, description: "Strand number." },
    { key: "time", required: true, type: "datetime", description: "Time of the sample: ISO 8601 or an Excel date; without an offset it is read as UTC." },
    {
      key: "cast_length_m",
      required: false,
      type: "number",
      unit: "m",
      min: 0,
      max: 100_000,
      description: "Cast length of the strand since the sequence start.",
    },
    { key: "casting_speed_m_min", required: false, type: "number", unit: "m/min", min: 0, max: 10, description: "Casting speed (0 while the strand stands)." },
    { key: "tundish_temp_c", required: false, type: "number", unit: "°C", min: 1350, max: 1700, description: "Tundish temperature." },
    { key: "embr_current_a", required: false, type: "number", unit: "A", min: 0, max: 5000, description: "Brake coil current." },
    { key: "sen_depth_mm", required: false, type: "number", unit: "mm", min: 0, max: 500, description: "SEN immersion depth." },
    { key: "argon_nl_min", required: false, type: "number", unit: "NL/min", min: 0, max: 100, description: "Argon flow." },
    { key: "mold_level_mm", required: false, type: "number", unit: "mm", min: -100, max: 100, description: "Mold level deviation from its set point." },
  ],
  products: [
    {
      key: "product_id",
      required: true,
      type: "text",
      description: "Coil or plate id as the rolling mill writes it, unique. Importing it again updates the mapping.",
    },
    { key: "kind", required: true, type: "text", description: "coil or plate." },
    { key: "slab_id", required: true, type: "text", description: "The slab it was rolled from; the slab must exist." },
    { key: "rolled_at", required: false, type: "datetime", description: "When it was rolled: ISO 8601 or an Excel date." },
    { key: "weight_t", required: false, type: "number", unit: "t", min: 0.1, max: 100, description: "Weight of the coil or plate." },
  ],
};

export const IMPORT_MAX_BYTES = 20 * 1024 * 1024;

/**
 * What one import may hold, checked while the file is read (a workbook is a zip: a few MB can unpack
 * to gigabytes). The largest plant files we know of — a day of process samples, a month of slabs —
 * stay far below these.
 */
export const IMPORT_LIMITS = {
  /** Data rows (the header not counted); also the most items one feed call may send. */
  rows: 200_000,
  /** Columns holding a value; every import has fewer than 40 keys. */
  columns: 100,
  /** Cells holding a value, over the whole sheet. */
  cells: 4_000_000,
  /** Characters in one cell: Excel's own limit. */
  cellChars: 32_767,
  /** Bytes of a workbook's parts once unpacked (sheet, shared strings, workbook, relations). */
  unpackedBytes: 256 * 1024 * 1024,
  /** Parts in a workbook's zip. */
  zipEntries: 2_000,
  /** Characters in one CSV line. */
  csvLineChars: 1_000_000,
  /** Seconds one import may spend reading and checking before it is stopped. */
  checkSeconds: 120,
} as const;
/** The answer lists at most this many row errors; `errorCount` tells how many there were. */
export const IMPORT_MAX_LISTED_ERRORS = 500;

export const rowErrorSchema = z.object({
  /** Row number as a spreadsheet shows it (the header is row 1); for the JSON feed, the array index + 1. */
  row: z.number().int(),
  column: z.string().nullable(),
  message: z.string(),
});
export type RowError = z.infer<typeof rowErrorSchema>;

export const importResultSchema = z.object({
  kind: importKindSchema,
  dryRun: z.boolean(),
  format: z.enum(["xlsx", "csv", "json"]),
  fileName: z.string().nullable(),
  rows: z.number().int(),
  valid: z.boolean(),
  /** For a dry run: what a real import would do. */
  counts: z.object({ created: z.number().int(), updated: z.number().int(), unchanged: z.number().int() }),
  errors: z.array(rowErrorSchema),
  errorCount: z.number().int(),
  /** Slabs whose resolved conditions were recomputed (real imports). */
  slabsResolved: z.number().int(),
  importId: z.number().int().nullable(),
});
export type ImportResult = z.infer<typeof importResultSchema>;

export const importQuerySchema = z.object({
  dryRun: z
    .enum(["true", "false", "1", "0"])
    .optional()
    .transform((v) => v === "true" || v === "1"),
});

export const importRunSchema = z.object({
  id: z.number().int(),
  kind: importKindSchema,
  source: z.enum(["upload", "ingest"]),
  fileName: z.string().nullable(),
  format: z.string(),
  rows: z.number().int(),
  created: z.number().int(),
  updated: z.number().int(),
  unchanged: z.number().int(),
  slabsResolved: z.number().int(),
  /** The person, or the API token's name. */
  by: z.string().nullable(),
  startedAt: z.string(),
  finishedAt: z.string(),
});
export type ImportRun = z.infer<typeof importRunSchema>;
