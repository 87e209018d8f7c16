/**
 * The layout of the report cache's slab facts (report-cache.ts): one typed column per field, each as
 * narrow as its values allow, every value read back exactly as SQLite holds it.
 *
 * - Ids and small codes (caster, strand, grade, family, position in the sequence) start as bytes and
 *   widen to 16 or 32 bits the first time a larger value comes.
 * - A variable's column is Float32 while every value of it sits on the variable's grid (a multiple of
 *   10^−(digits + 1), the resolution the reports group at: shared/variables.ts) and Float32 carries
 *   that grid value back exactly: the reports' grouping Math.round(x · scale) / scale then gives the
 *   identical number, and `exactValue` gives back the stored value itself. The first value that does
 *   not (a sample mean, a derived value with every digit) turns that one column into Float64.
 * - The weight is Float32 while every weight is a float32 exactly (whole tonnes, halves…), else Float64.
 * - Capacity grows by a fixed step (an eighth, at least 65,536 rows), one column at a time: the old
 *   and the new copy of one column live together for a moment, never two copies of the whole cache.
 * - The columns sit on shared memory (SharedArrayBuffer), so the helper threads of a screening read
 *   them where they are, without a copy (reports/screening-threads.ts). The index by slab id is
 *   not shared: only this thread looks slabs up by id.
 * - Condition columns beyond the memory set aside for them are kept in files (`disk`,
 *   report-cache-disk.ts) with the same bytes; a report reads a variable through `eachPiece` or
 *   `valuesOf`, whichever way it is held.
 *
 * Written here because no well-kept library offers exact narrow typed columns over better-sqlite3.
 */
import { VARIABLES } from "@shared/variables";
import {
  appendFrom,
  closeColumnFile,
  columnToDisk,
  eachDiskPiece,
  endAppend,
  newAppendedColumn,
  readWhole,
  writeValue,
  type DiskColumn,
  type DiskType,
} from "./report-cache-disk";

export type IdColumn = Uint8Array | Uint16Array | Int32Array;
export type ValueColumn = Float32Array | Float64Array;

export interface SlabFacts {
  size: number;
  slabId: Int32Array;
  castAt: Float64Array;
  casterId: IdColumn;
  strandId: IdColumn;
  /** The slab's heat (slabs of one heat share its heat-level values: the clusters of robust SEs). */
  heatId: Int32Array;
  gradeId: IdColumn;
  familyId: IdColumn;
  transition: Uint8Array;
  sequencePosition: IdColumn;
  weightT: ValueColumn;
  /**
   * The condition columns held in memory (the others are in `disk`): read them through eachPiece or valuesOf.
   * NaN where the slab has no value. A Float32 column holds values on the variable's grid: group it
   * as the reports do, or read a slab's own value with `exactValue`.
   */
  vars: Record<string, ValueColumn>;
  /** The condition columns kept in files (report-cache-disk.ts), the same bytes as in memory. */
  disk: Record<string, DiskColumn>;
  /** slab row id → index in the columns (−1 when absent). */
  indexOf: Int32Array;
}

export const FACT_VARIABLES = VARIABLES.map((v) => v.key);

/** Per variable, the grid the reports group its values on: 10^(digits + 1) steps per unit. */
export const VARIABLE_SCALE: Readonly<Record<string, number>> = Object.fromEntries(VARIABLES.map((v) => [v.key, 10 ** (v.digits + 1)]));

export const ID_COLUMNS = ["casterId", "strandId", "gradeId", "familyId", "sequencePosition"] as const;
type IdKey = (typeof ID_COLUMNS)[number];

/** The columns read from slab_conditions, in the order `put` takes them. */
export const SELECT_COLUMNS = `slab_id, cast_at, caster_id, strand_id, grade_id, family_id, transition, sequence_position, weight_t, heat_id, ${FACT_VARIABLES.join(", ")}`;
const FIRST_VAR = 10;
export type FactRow = (number | null)[];

/** At least this many rows are added when the columns grow (or kept spare after a build). */
export const GROW_MIN_ROWS = 65_536;
const stepFor = (n: number) => Math.max(GROW_MIN_ROWS, Math.floor(n / 8));

type ColumnType<T> = { new (buffer: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };

/** A zeroed column of `length` entries on shared memory. */
export const sharedColumn = <T>(type: ColumnType<T>, length: number): T => new type(new SharedArrayBuffer(length * type.BYTES_PER_ELEMENT));

/**
 * Empty facts with room for `capacity` rows. `toDisk`: variables whose columns go straight to files
 * in `dir` as the rows are written (a build of a plant beyond the memory set aside for them); one
 * whose file cannot be made stays in memory.
 */
export function allocate(capacity: number, maxId: number, toDisk?: { dir: string; keys: string[]; types?: Record<string, DiskType> }): SlabFacts {
  const vars: Record<string, ValueColumn> = {};
  const disk: Record<string, DiskColumn> = {};
  const planned = new Set(toDisk?.keys ?? []);
  for (const k of FACT_VARIABLES) {
    if (planned.has(k)) {
      try {
        // Float64 from the start where the facts before had it (no rewrite at its first value off the grid).
        disk[k] = newAppendedColumn(toDisk!.dir, toDisk!.types?.[k] === "Float64Array" ? "Float64Array" : "Float32Array");
        continue;
      } catch {
        // Kept in memory; the build's end tries again and says why (report-cache.ts).
      }
    }
    vars[k] = sharedColumn(Float32Array, capacity);
  }
  return {
    size: 0,
    slabId: sharedColumn(Int32Array, capacity),
    castAt: sharedColumn(Float64Array, capacity),
    casterId: sharedColumn(Uint8Array, capacity),
    strandId: sharedColumn(Uint8Array, capacity),
    heatId: sharedColumn(Int32Array, capacity),
    gradeId: sharedColumn(Uint8Array, capacity),
    familyId: sharedColumn(Uint8Array, capacity),
    transition: sharedColumn(Uint8Array, capacity),
    sequencePosition: sharedColumn(Uint8Array, capacity),
    weightT: sharedColumn(Float32Array, capacity),
    vars,
    disk,
    indexOf: new Int32Array(maxId + 1).fill(-1),
  };
}

/** The capacity a build of `rows` rows starts with: the rows and a little room for new slabs (then steps). */
export const buildCapacity = (rows: number) => rows + Math.max(GROW_MIN_ROWS, Math.floor(rows / 32));

/** The stored value of slab row i of a variable, exactly as SQLite holds it (NaN when none). */
export function exactValue(col: ValueColumn, scale: number, i: number): number {
  const x = col[i]!;
  return col instanceof Float32Array ? Math.round(x * scale) / scale : x;
}

/**
 * A variable's values for a report that walks the slabs in order: `use(values, from, to)` with
 * values[i − from] the value of slab row i for from ≤ i < to. A column in memory comes in one piece
 * (from 0); one in a file in pieces of 2 MB, in order (report-cache-disk.ts). `use` must not keep them.
 */
export function eachPiece(f: SlabFacts, key: string, use: (values: ValueColumn, from: number, to: number) => void) {
  const d = f.disk[key];
  if (d) return eachDiskPiece(d, f.size, use);
  const col = f.vars[key];
  if (!col) throw new Error(`report cache: no column for ${key}`);
  use(col, 0, f.size);
}

/** A variable's whole column (the caller may keep it): the column in memory, or a copy read from its file. */
export function valuesOf(f: SlabFacts, key: string): ValueColumn {
  const d = f.disk[key];
  if (d) return readWhole(d, f.size);
  const col = f.vars[key];
  if (!col) throw new Error(`report cache: no column for ${key}`);
  return col;
}

/** A variable's column as Float64 with the stored values (the column itself when it is Float64 in memory). */
export function exactColumn(f: SlabFacts, key: string): Float64Array {
  const col = valuesOf(f, key);
  if (col instanceof Float64Array) return col;
  const scale = VARIABLE_SCALE[key]!;
  const out = new Float64Array(f.size);
  for (let i = 0; i < f.size; i++) out[i] = Math.round(col[i]! * scale) / scale;
  return out;
}

/** Moves the named condition columns from memory to files in `dir` (their memory is let go). */
export function moveToDisk(f: SlabFacts, dir: string, keys: string[]) {
  for (const k of keys) {
    const col = f.vars[k];
    if (!col || f.disk[k]) continue;
    f.disk[k] = columnToDisk(dir, col, f.size);
    delete f.vars[k];
  }
}

/** A build's end: the rows still waiting for the column files written out. */
export function endBuild(f: SlabFacts) {
  for (const d of Object.values(f.disk)) endAppend(d);
}

/** Closes the facts' column files (facts replaced or dropped): the system frees their space. */
export function closeDisk(f: SlabFacts | null) {
  if (!f) return;
  for (const d of Object.values(f.disk)) closeColumnFile(d);
  f.disk = {};
}

function resized<T extends IdColumn | ValueColumn | Uint8Array | Float64Array>(col: T, capacity: number, used: number): T {
  const next = sharedColumn(col.constructor as ColumnType<T>, capacity);
  next.set(col.subarray(0, Math.min(used, capacity)) as never);
  return next;
}

/** Room for `rows` rows; grows by a fixed step, one column at a time. */
export function ensureCapacity(f: SlabFacts, rows: number) {
  const cap = f.slabId.length;
  if (rows <= cap) return;
  const next = Math.max(rows, cap + stepFor(cap));
  f.slabId = resized(f.slabId, next, f.size);
  f.castAt = resized(f.castAt, next, f.size);
  f.heatId = resized(f.heatId, next, f.size);
  f.transition = resized(f.transition, next, f.size);
  f.weightT = resized(f.weightT, next, f.size);
  for (const k of ID_COLUMNS) f[k] = resized(f[k], next, f.size);
  // A column in a file grows as rows are written to it.
  for (const k of Object.keys(f.vars)) f.vars[k] = resized(f.vars[k]!, next, f.size);
}

/** Room in `indexOf` for slab ids up to `maxId`. */
export function ensureIndex(f: SlabFacts, maxId: number) {
  const len = f.indexOf.length;
  if (maxId < len) return;
  const next = new Int32Array(Math.max(maxId + 1, len + stepFor(len))).fill(-1);
  next.set(f.indexOf);
  f.indexOf = next;
}

/** The whole index again from the slab ids (after a snapshot is read). */
export function rebuildIndex(f: SlabFacts) {
  let maxId = 0;
  for (let i = 0; i < f.size; i++) if (f.slabId[i]! > maxId) maxId = f.slabId[i]!;
  f.indexOf = new Int32Array(maxId + stepFor(maxId) + 1).fill(-1);
  for (let i = 0; i < f.size; i++) f.indexOf[f.slabId[i]!] = i;
}

function widenId(f: SlabFacts, key: IdKey, i: number, v: number) {
  const col = f[key];
  // Values that do not fit even 32 bits (none in a plant) are refused rather than wrapped.
  if (col instanceof Int32Array || !Number.isInteger(v) || v < -(2 ** 31) || v >= 2 ** 31)
    throw new Error(`report cache: ${key} ${v} does not fit a 32-bit column`);
  const next = v >= 0 && v <= 0xffff && col instanceof Uint8Array ? sharedColumn(Uint16Array, col.length) : sharedColumn(Int32Array, col.length);
  next.set(col);
  next[i] = v;
  f[key] = next;
}

function widenValue(f: SlabFacts, key: string, i: number, v: number) {
  const col = f.vars[key]!;
  const scale = VARIABLE_SCALE[key]!;
  const next = sharedColumn(Float64Array, col.length);
  // Every value held so far is a grid value Float32 carries exactly: decoded, it is the stored one.
  // Rows past those written are still 0, as in a new column.
  const used = Math.max(f.size, i + 1);
  for (let j = 0; j < used; j++) next[j] = Math.round(col[j]! * scale) / scale;
  next[i] = v;
  f.vars[key] = next;
}

/** The same for a column in a file: its values rewritten as Float64 to a new file, with v at row i. */
function widenDisk(f: SlabFacts, key: string, i: number, v: number) {
  const d = f.disk[key]!;
  const scale = VARIABLE_SCALE[key]!;
  const used = Math.max(f.size, i + 1);
  // Read with the writes a patch still holds for it (readWhole applies them first).
  const old = readWhole(d, used);
  const next = new Float64Array(used);
  for (let j = 0; j < used; j++) next[j] = Math.round(old[j]! * scale) / scale;
  next[i] = v;
  const nd = columnToDisk(d.dir, next, used);
  // A build appending to it goes on appending to the new file.
  f.disk[key] = d.tail ? appendFrom(nd, used) : nd;
  closeColumnFile(d);
}

function putId(f: SlabFacts, key: IdKey, i: number, v: number) {
  const col = f[key];
  col[i] = v;
  // A typed array wraps what does not fit: read back, a different number means widen.
  if (col[i] !== v) widenId(f, key, i, v);
}

/** Writes row r (SELECT_COLUMNS order) at index i; the caller has made room (ensureCapacity, ensureIndex). */
export function put(f: SlabFacts, i: number, r: FactRow) {
  const id = r[0]!;
  f.slabId[i] = id;
  f.castAt[i] = r[1] ?? NaN;
  putId(f, "casterId", i, r[2] ?? 0);
  putId(f, "strandId", i, r[3] ?? 0);
  putId(f, "gradeId", i, r[4] ?? 0);
  putId(f, "familyId", i, r[5] ?? 0);
  putId(f, "sequencePosition", i, r[7] ?? 0);
  f.transition[i] = r[6] ? 1 : 0;
  const w = r[8] ?? NaN;
  f.weightT[i] = w;
  if (f.weightT instanceof Float32Array && !(f.weightT[i] === w || w !== w)) {
    const next = sharedColumn(Float64Array, f.weightT.length);
    next.set(f.weightT);
    next[i] = w;
    f.weightT = next;
  }
  f.heatId[i] = r[9] ?? 0;
  for (let k = 0; k < FACT_VARIABLES.length; k++) {
    const key = FACT_VARIABLES[k]!;
    const v = r[FIRST_VAR + k] ?? NaN;
    const d = f.disk[key];
    if (d) {
      // The same test as in memory below, on the value Float32 would hold.
      if (d.type === "Float32Array" && v === v) {
        const scale = VARIABLE_SCALE[key]!;
        if (Math.round(Math.fround(v) * scale) / scale !== v) {
          widenDisk(f, key, i, v);
          continue;
        }
      }
      writeValue(d, i, v);
      continue;
    }
    const col = f.vars[key]!;
    col[i] = v;
    if (col instanceof Float32Array && v === v) {
      const scale = VARIABLE_SCALE[key]!;
      if (Math.round(col[i]! * scale) / scale !== v) widenValue(f, key, i, v);
    }
  }
  f.indexOf[id] = i;
}

/** Bytes held in memory by the columns (capacity, not only the rows used). */
export function factsBytes(f: SlabFacts): number {
  let bytes = f.slabId.byteLength + f.castAt.byteLength + f.heatId.byteLength + f.transition.byteLength + f.weightT.byteLength + f.indexOf.byteLength;
  for (const k of ID_COLUMNS) bytes += f[k].byteLength;
  for (const col of Object.values(f.vars)) bytes += col.byteLength;
  return bytes;
}

/** Bytes of the rows in the column files. */
export const diskBytes = (f: SlabFacts) => Object.values(f.disk).reduce((s, d) => s + f.size * (d.type === "Float32Array" ? 4 : 8), 0);

/** The type each variable's column has, in memory or in its file. */
export function columnTypes(f: SlabFacts): Record<string, DiskType> {
  return Object.fromEntries(FACT_VARIABLES.map((k) => [k, f.disk[k] ? f.disk[k].type : f.vars[k] instanceof Float32Array ? "Float32Array" : "Float64Array"]));
}

/** How many variables are held as Float32 (on their grid) and how many as Float64, and which are in files. */
export function columnKinds(f: SlabFacts) {
  const types = columnTypes(f);
  const float32 = FACT_VARIABLES.filter((k) => types[k] === "Float32Array");
  return { float32, float64: FACT_VARIABLES.filter((k) => types[k] !== "Float32Array"), onDisk: Object.keys(f.disk) };
}
