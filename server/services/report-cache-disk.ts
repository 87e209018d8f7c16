/**
 * Condition columns of the report cache kept on disk when they do not fit the memory set aside for
 * them. At five million slabs the 22 condition columns are ≈ 680 MB; a plant of a million slabs
 * keeps them all in memory and nothing here runs.
 *
 * - By default (REPORT_COLUMNS_MB unset) every column stays in memory when they all fit in 256 MB
 *   (a plant of up to ≈ 1.8–2 million slabs), else every column goes to a file. Keeping some in memory
 *   made no report faster (measured at five million slabs on the 2-core machine, the real server
 *   with one helper: screening 1.74–1.90 s crude and 3.06–3.38 s adjusted with 256 MB of them in
 *   memory, 1.71–1.77 s and 3.20–3.36 s with none) and cost 250 MB at the peak (852–1,004 MB
 *   against 725–755 MB).
 * - REPORT_COLUMNS_MB set: the columns on their grid (Float32, half the bytes) first, then the
 *   others, each in the order of shared/variables.ts, stay in memory while they fit. The rest are written to a file
 *   each, beside the database (or in REPORT_COLUMNS_DIR), and read back when a report needs them:
 *   in pieces of 2 MB as a report walks the slabs (eachPiece), or whole for a report that looks
 *   slabs up out of order (valuesOf). A 40 MB column comes back from the operating system's file
 *   cache in ≈ 6 ms on the 2-core reference machine; a screening reads each once. The bytes are the
 *   column's own: a report reads the same numbers either way.
 * - The files are opened and at once removed from the directory: only this process reaches them
 *   (through their descriptors, which a screening's helper threads share), and the system frees
 *   their space when they are closed or the process ends, crash or not.
 * - Writes (patch, a new slab) go to the file at the slab's row, gathered over a patch into runs
 *   of adjacent rows (withDiskBatch); a column on its grid that gets a value off it is rewritten as
 *   Float64, as in memory (report-cache-columns.ts).
 * - A file that cannot be made or written is not a report's failure: the caller keeps that column
 *   in memory, or reads the facts again (report-cache.ts).
 *
 * Written here because the store is our own typed columns; no library reads a column of them back.
 */
import fs from "node:fs";
import path from "node:path";
import { VARIABLES } from "@shared/variables";
import { processAlive } from "../lib/process-alive";

export type DiskType = "Float32Array" | "Float64Array";

/** A condition column held in a file (its descriptor is valid in every thread of the process). */
export interface DiskColumn {
  /** Unique to this file in this process (its name while it had one). */
  token: string;
  fd: number;
  /** The directory it was made in (a column rewritten as Float64 gets a new file there). */
  dir: string;
  type: DiskType;
  /** Closed (its facts were replaced, or it was rewritten as Float64): its descriptor is no longer its own. */
  closed?: boolean;
  /**
   * Rows appended one after another (a build writes every slab in turn) wait here and go to the file
   * a piece at a time: `buf[0 … n)` are rows from … from + n − 1.
   */
  tail?: { from: number; n: number; buf: Float32Array | Float64Array };
}

/** The memory the default gives the condition columns, MB: all of them, or none. */
export const DEFAULT_COLUMNS_MB = 256;
/** Memory for the condition columns, MB (the rest go to disk), from the server's settings; null: the default (all or none). */
let budgetMb: number | null = null;
/** Where the files go (REPORT_COLUMNS_DIR); null: beside the database. */
let filesDir: string | null = null;

/** Sets the memory this thread's report cache gives the condition columns (null: the default), and where the rest go (REPORT_COLUMNS_MB, REPORT_COLUMNS_DIR; tests). */
export function configureColumnMemory(mb: number | null, dir?: string | null) {
  budgetMb = mb;
  if (dir !== undefined) filesDir = dir ? path.resolve(dir) : null;
}
export const columnMemoryMb = () => budgetMb;

const bytesOf = (type: DiskType) => (type === "Float32Array" ? 4 : 8);
/** A new zeroed array of the file's type. */
const arrayOf = (type: DiskType, length: number): Float32Array | Float64Array =>
  type === "Float32Array" ? new Float32Array(length) : new Float64Array(length);

/** Rows of a piece (2 MB of Float64). */
export const PIECE_ROWS = 262_144;
let pieceRows = PIECE_ROWS;
/** Pieces of fewer rows (tests: a test plant is smaller than one piece). */
export function configurePieces(rows = PIECE_ROWS) {
  pieceRows = rows;
}

/**
 * The variables whose columns go to disk: with room for `rows` rows of the given types, those beyond the
 * budget (on-grid ones kept first); with the default (`mb` null), none when they all fit in
 * DEFAULT_COLUMNS_MB, else all. None for a database in memory (`dir` null).
 */
export function chooseOnDisk(rows: number, types: Record<string, DiskType>, dir: string | null, mb = budgetMb): string[] {
  if (!dir) return [];
  const order = [...VARIABLES.filter((v) => types[v.key] === "Float32Array"), ...VARIABLES.filter((v) => types[v.key] !== "Float32Array")];
  const bytes = (key: string) => rows * bytesOf(types[key]!);
  if (mb === null) {
    const all = order.reduce((sum, v) => sum + bytes(v.key), 0);
    return all <= DEFAULT_COLUMNS_MB * 1048576 ? [] : order.map((v) => v.key);
  }
  const budget = mb * 1048576;
  let used = 0;
  const out: string[] = [];
  for (const v of order) {
    if (used + bytes(v.key) <= budget) used += bytes(v.key);
    else out.push(v.key);
  }
  return out;
}

/** Where a database's column files go: REPORT_COLUMNS_DIR, else beside it; null for a database in memory or a temporary one. */
export const columnDirOf = (databaseFile: string) =>
  databaseFile && databaseFile !== ":memory:" ? (filesDir ?? path.dirname(path.resolve(databaseFile))) : null;

let files = 0;
const NAME_PREFIX = ".strandsight-column.";
/** A column file could not be made, written or read (a full or failing disk): the caller keeps the column in memory. */
export class ColumnFileError extends Error {
  /** The system's code (ENOSPC, ENOENT …). */
  readonly code: string;
  constructor(what: string, err: unknown) {
    const code = (err as NodeJS.ErrnoException)?.code ?? String(err);
    super(`report cache: a column file could not be ${what} (${code})`, { cause: err });
    this.code = code;
  }
}

/** Tests: writes fail as on a full disk after this many more (null: never). */
let failAfterWrites: number | null = null;
export function failColumnWritesAfter(writes: number | null) {
  failAfterWrites = writes;
}

/**
 * Removes the column files a process that ended left in `dir` (one killed between making a file and
 * removing its name, a moment in which nothing else happens): those whose process is gone.
 */
export function removeStaleColumnFiles(dir: string | null) {
  if (!dir) return;
  let names: string[];
  try {
    names = fs.readdirSync(dir).filter((n) => n.startsWith(NAME_PREFIX));
  } catch {
    return;
  }
  for (const name of names) {
    const pid = Number(name.slice(NAME_PREFIX.length).split(".")[0]);
    if (!Number.isInteger(pid) || pid === process.pid || processAlive(pid)) continue;
    try {
      fs.unlinkSync(path.join(dir, name));
    } catch {
      // Removed meanwhile, or not ours to remove.
    }
  }
}

/** A new, empty column file in `dir`, already removed from the directory (the descriptor keeps it). */
export function newColumnFile(dir: string, type: DiskType): DiskColumn {
  const token = `${process.pid}.${++files}.${Math.random().toString(36).slice(2, 10)}`;
  const file = path.join(dir, `${NAME_PREFIX}${token}`);
  let fd: number;
  try {
    fd = fs.openSync(file, "wx+", 0o600);
  } catch (err) {
    throw new ColumnFileError("made", err);
  }
  try {
    fs.unlinkSync(file);
  } catch {
    // A system that cannot remove an open file (not Linux, where Strandsight runs: deploy/) keeps it
    // beside the database until it is removed by hand.
  }
  return { token, fd, dir, type };
}

export function closeColumnFile(d: DiskColumn) {
  if (d.closed) return;
  d.closed = true;
  try {
    fs.closeSync(d.fd);
  } catch {
    // Already closed.
  }
}

/** Writes all of `bytes` at `position`. */
export function writeAt(fd: number, bytes: Uint8Array, position: number) {
  let done = 0;
  try {
    if (failAfterWrites !== null && failAfterWrites-- <= 0) throw Object.assign(new Error("no space left (a test)"), { code: "ENOSPC" });
    while (done < bytes.length) done += fs.writeSync(fd, bytes, done, bytes.length - done, position + done);
  } catch (err) {
    throw new ColumnFileError("written", err);
  }
}

/** Reads `into` from `position` up to the file's end: the bytes read. */
function readInto(fd: number, into: Uint8Array, position: number): number {
  let done = 0;
  while (done < into.length) {
    const n = fs.readSync(fd, into, done, into.length - done, position + done);
    if (n === 0) break;
    done += n;
  }
  return done;
}

/** Reads all of `into` from `position`; false when the file ends first. */
export const readAt = (fd: number, into: Uint8Array, position: number): boolean => readInto(fd, into, position) === into.length;

/** Reads `out` from row `from` on; rows past the file's end (never written) read 0, as in a new column in memory. */
function readRows(d: DiskColumn, out: Float32Array | Float64Array, from: number) {
  const bytes = new Uint8Array(out.buffer, out.byteOffset, out.byteLength);
  bytes.fill(0, readInto(d.fd, bytes, from * out.BYTES_PER_ELEMENT));
}

/** Writes a whole column's first `rows` values to a new file. */
export function columnToDisk(dir: string, col: Float32Array | Float64Array, rows: number): DiskColumn {
  const d = newColumnFile(dir, col instanceof Float32Array ? "Float32Array" : "Float64Array");
  try {
    writeAt(d.fd, new Uint8Array(col.buffer, col.byteOffset, rows * col.BYTES_PER_ELEMENT), 0);
  } catch (err) {
    closeColumnFile(d);
    throw err;
  }
  return d;
}

const one64 = new Float64Array(1);
const one32 = new Float32Array(1);

/** Writes held back while a batch runs (withDiskBatch): per file, the rows and values in order. */
let batch: Map<DiskColumn, { at: number[]; v: number[] }> | null = null;

/** Stores value v at row i of the file (as a typed array of its type would hold it); in a batch, at its end. */
export function writeValue(d: DiskColumn, i: number, v: number) {
  const t = d.tail;
  if (t && i === t.from + t.n && !batch) {
    // The next row of an append: into the waiting piece, which goes out when full.
    t.buf[t.n++] = v;
    if (t.n === t.buf.length) flushTail(d);
    return;
  }
  if (t && t.n > 0) flushTail(d);
  if (batch) {
    let p = batch.get(d);
    if (!p) batch.set(d, (p = { at: [], v: [] }));
    p.at.push(i);
    p.v.push(v);
    return;
  }
  const one = d.type === "Float32Array" ? one32 : one64;
  one[0] = v;
  writeAt(d.fd, new Uint8Array(one.buffer), i * one.BYTES_PER_ELEMENT);
}

/** Writes the rows waiting in the file's tail, and starts the next piece after them. */
function flushTail(d: DiskColumn) {
  const t = d.tail;
  if (!t || t.n === 0) return;
  writeAt(d.fd, new Uint8Array(t.buf.buffer, 0, t.n * t.buf.BYTES_PER_ELEMENT), t.from * t.buf.BYTES_PER_ELEMENT);
  t.from += t.n;
  t.n = 0;
}

/**
 * A new file for a column a build writes row after row from row 0: the rows wait in a piece of 2 MB
 * and go to the file together (the build never holds the column whole in memory).
 */
export function newAppendedColumn(dir: string, type: DiskType): DiskColumn {
  return appendFrom(newColumnFile(dir, type), 0);
}

/** Rows from `from` on are appended to the file through a waiting piece (a column rewritten as Float64 mid-build). */
export function appendFrom(d: DiskColumn, from: number): DiskColumn {
  d.tail = { from, n: 0, buf: arrayOf(d.type, pieceRows) };
  return d;
}

/** Past this many separate runs of rows, a file is read, changed and written whole (measured: one write costs ≈ 6 µs, a 40 MB file ≈ 20 ms). */
const WHOLE_FROM_RUNS = 2_000;

/** The writes held back for one file, applied: runs of adjacent rows in one write each, or the file whole. */
function flushOne(d: DiskColumn, held: { at: number[]; v: number[] }, rows: number) {
  const n = held.at.length;
  if (n === 0) return;
  // Taken out first: what follows reads the file, and nothing is held for it any more.
  const p = { at: held.at.splice(0), v: held.v.splice(0) };
  // By row; a row written twice keeps its later value (the later write comes later in the order).
  const order = Array.from({ length: n }, (_, k) => k).sort((a, b) => p.at[a]! - p.at[b]! || a - b);
  let runs = 1;
  for (let k = 1; k < n; k++) if (p.at[order[k]!]! > p.at[order[k - 1]!]! + 1) runs++;
  if (runs > WHOLE_FROM_RUNS) {
    // (Nothing is held for it any more: readWhole applies nothing twice.)
    const col = readWhole(d, Math.max(rows, p.at[order[n - 1]!]! + 1));
    for (const k of order) col[p.at[k]!] = p.v[k]!;
    writeAt(d.fd, new Uint8Array(col.buffer), 0);
  } else {
    for (let k = 0; k < n;) {
      const from = p.at[order[k]!]!;
      let end = k + 1;
      while (end < n && p.at[order[end]!]! <= p.at[order[end - 1]!]! + 1) end++;
      const run = arrayOf(d.type, p.at[order[end - 1]!]! - from + 1);
      for (let j = k; j < end; j++) run[p.at[order[j]!]! - from] = p.v[order[j]!]!;
      writeAt(d.fd, new Uint8Array(run.buffer), from * run.BYTES_PER_ELEMENT);
      k = end;
    }
  }
}

/** Applies the writes held back for one file now (before it is read whole: a column rewritten as Float64). */
export function flushDiskWrites(d: DiskColumn, rows: number) {
  flushTail(d);
  const p = batch?.get(d);
  if (p) flushOne(d, p, rows);
}

/** Ends appending to the file: the waiting rows written, the piece let go (a build's end). */
export function endAppend(d: DiskColumn) {
  flushTail(d);
  delete d.tail;
}

/**
 * Runs `fn` (a patch of many slabs) with the writes to the files held back and applied at its end,
 * each file's in runs of adjacent rows (new slabs: one write per file), or whole: one write per value
 * cost ≈ 6 s for 49,000 slabs at 22 files on the 2-core reference machine. `rows`: the facts' rows at the end.
 */
export function withDiskBatch<T>(rows: () => number, fn: () => T): T {
  if (batch) return fn();
  batch = new Map();
  try {
    return fn();
  } finally {
    const held = batch;
    batch = null;
    for (const [d, p] of held) if (!d.closed) flushOne(d, p, rows());
  }
}

/** The file's first `rows` values read into a new array of its type (rows past its end read as 0). */
export function readWhole(d: DiskColumn, rows: number): Float32Array | Float64Array {
  flushDiskWrites(d, rows);
  const out = arrayOf(d.type, rows);
  readRows(d, out, 0);
  return out;
}

/**
 * The file's first `rows` values, piece by piece: `use(values, from, to)` with values[i − from] the
 * value of row i for from ≤ i < to, the pieces in order. For a report that walks the slabs in order.
 */
export function eachDiskPiece(d: DiskColumn, rows: number, use: (values: Float32Array | Float64Array, from: number, to: number) => void) {
  flushDiskWrites(d, rows);
  const piece = arrayOf(d.type, Math.min(rows, pieceRows));
  for (let from = 0; from < rows; from += pieceRows) {
    const to = Math.min(rows, from + pieceRows);
    const view = piece.subarray(0, to - from);
    readRows(d, view, from);
    use(view, from, to);
  }
}
