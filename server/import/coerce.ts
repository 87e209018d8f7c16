/**
 * Header mapping and cell coercion shared by the three imports: machine keys matched
 * case-insensitively, each cell turned into its column's type and checked against its bounds, every
 * problem recorded as { row, column, message } in words a process engineer understands.
 */
import { IMPORT_COLUMNS, IMPORT_MAX_LISTED_ERRORS, type ColumnSpec, type ImportKind, type RowError } from "@shared/api/imports";
import { figure, said, sayIn, type Said, type SaidValues } from "../lib/http-error";
import type { CellStore } from "./cell-store";
import type { Cell, Table } from "./read-table";

export type Value = string | number | boolean | null;

/** One checked row as the plans read it: a view into ParsedRows, made when asked for. */
export interface ParsedRow {
  rowNo: number;
  /** Only the columns present in the file; null = present but empty. */
  values: { has(key: string): boolean; get(key: string): Value | undefined };
  /** The row had at least one error in its own cells. */
  bad: boolean;
}

/** Row i of the checked rows: one small object, its values read from the columns when asked. */
class RowView implements ParsedRow {
  constructor(
    private readonly rows: ParsedRows,
    private readonly i: number,
  ) {}
  get rowNo() {
    return this.rows.rowNo(this.i);
  }
  get bad() {
    return this.rows.bad(this.i);
  }
  get values() {
    return this;
  }
  has(key: string) {
    return this.rows.has(this.i, key);
  }
  get(key: string) {
    return this.rows.get(this.i, key);
  }
}

/** A checked column: numbers, times (epoch ms) and whole numbers with NaN for empty; true/false as 1/0 with −1 for empty. */
type Column = { type: "number"; data: Float64Array } | { type: "boolean"; data: Int8Array } | { type: "text"; data: (string | null)[] };

/**
 * The checked rows, by column: typed arrays for numbers and yes/no, an array for texts. At 100,000
 * rows this is a few MB, where a Map of values per row took over 50 MB. Iterating gives a view per
 * row (`ParsedRow`); the views hold no values of their own.
 */
export class ParsedRows implements Iterable<ParsedRow> {
  readonly length: number;
  private readonly rowNos: Int32Array;
  /** 1: the row has an error in its own cells; 2: the row is unusable as a whole (no values). */
  private readonly flags: Uint8Array;
  private readonly columns = new Map<string, Column>();

  constructor(rowNos: Int32Array, specs: readonly ColumnSpec[]) {
    this.length = rowNos.length;
    this.rowNos = rowNos;
    this.flags = new Uint8Array(rowNos.length);
    for (const spec of specs) {
      const n = rowNos.length;
      this.columns.set(
        spec.key,
        spec.type === "text"
          ? { type: "text", data: new Array<string | null>(n).fill(null) }
          : spec.type === "boolean"
            ? { type: "boolean", data: new Int8Array(n).fill(-1) }
            : { type: "number", data: new Float64Array(n).fill(NaN) },
      );
    }
  }

  rowNo(i: number): number {
    return this.rowNos[i]!;
  }
  bad(i: number): boolean {
    return (this.flags[i]! & 1) !== 0;
  }
  markBad(i: number) {
    this.flags[i]! |= 1;
  }
  markInvalid(i: number) {
    this.flags[i]! |= 3;
  }
  /** Whether the file has the column (an unusable row has none). */
  has(i: number, key: string): boolean {
    return (this.flags[i]! & 2) === 0 && this.columns.has(key);
  }
  /** The row's value in the column; undefined when the file has no such column. */
  get(i: number, key: string): Value | undefined {
    if ((this.flags[i]! & 2) !== 0) return undefined;
    const col = this.columns.get(key);
    if (!col) return undefined;
    switch (col.type) {
      case "number": {
        const v = col.data[i]!;
        return Number.isNaN(v) ? null : v;
      }
      case "boolean": {
        const v = col.data[i]!;
        return v < 0 ? null : v === 1;
      }
      default:
        return col.data[i]!;
    }
  }
  set(i: number, key: string, v: Value) {
    const col = this.columns.get(key)!;
    if (col.type === "text") col.data[i] = v as string | null;
    else if (col.type === "boolean") col.data[i] = v === null ? -1 : v ? 1 : 0;
    else col.data[i] = v === null ? NaN : (v as number);
  }
  row(i: number): ParsedRow {
    return new RowView(this, i);
  }
  *[Symbol.iterator](): Iterator<ParsedRow> {
    for (let i = 0; i < this.length; i++) yield this.row(i);
  }
  /** Values of one column for every row (for collecting keys), undefined where the file lacks it. */
  map<T>(fn: (row: ParsedRow, i: number) => T): T[] {
    const out: T[] = new Array<T>(this.length);
    for (let i = 0; i < this.length; i++) out[i] = fn(this.row(i), i);
    return out;
  }
}

/**
 * Every problem is counted; only the first `keep` by row are kept (the answer lists at most
 * IMPORT_MAX_LISTED_ERRORS), so a file with an error in every cell cannot fill the memory.
 */
export class ErrorList {
  private items: Problem[] = [];
  private total = 0;
  private listed: RowError[] | null = null;
  constructor(readonly keep = IMPORT_MAX_LISTED_ERRORS) {}
  /** A problem in plain words, or as a Said (errors.imports.rows.*): its English is written only if it is listed. */
  add(row: number, column: string | null, words: string | Said) {
    this.total++;
    this.listed = null;
    this.items.push({ row, column, words });
    if (this.items.length >= this.keep * 4) this.trim();
  }
  /** Adds another list's errors after this one's (as if added here in the order they were found). */
  append(other: ErrorList) {
    this.total += other.total;
    this.listed = null;
    other.trim();
    for (const e of other.items) {
      this.items.push(e);
      if (this.items.length >= this.keep * 4) this.trim();
    }
  }
  private trim() {
    // A stable sort keeps errors of one row in the order they were found.
    this.items = this.items.sort((a, b) => a.row - b.row).slice(0, this.keep);
  }
  /** The first errors by row, at most `keep`: the English message, and its Said kept on it unlisted (saidOfRowError). */
  get list(): readonly RowError[] {
    this.trim();
    return (this.listed ??= this.items.map(({ row, column, words }) => {
      if (typeof words === "string") return { row, column, message: words };
      return withSaid({ row, column, message: sayIn(words, "en") }, words);
    }));
  }
  get count() {
    return this.total;
  }
}

type Problem = { row: number; column: string | null; words: string | Said };

/**
 * A row error's Said rides on it as a property that is not enumerable: never in the JSON answer
 * (the client reads `message`), nor across a thread (import-worker.ts sends the Saids beside the
 * result), so the main thread can say the message in the requester's language (import-pool.ts).
 */
export function withSaid(e: RowError, s: Said): RowError {
  return Object.defineProperty(e, "said", { value: s, enumerable: false, writable: true });
}
export const saidOfRowError = (e: RowError): Said | undefined => (e as RowError & { said?: Said }).said;

/** A cell's problem: the key under errors.imports.rows (the column's name is put in as {{column}}) and its values. */
type Fault = { fault: string; values?: SaidValues };
const fault = (key: string, values?: Fault["values"]): Fault => (values ? { fault: key, values } : { fault: key });
const isFault = (x: unknown): x is Fault => typeof x === "object" && x !== null && "fault" in x;

const EXCEL_EPOCH_MS = Date.UTC(1899, 11, 30);
/** Workbooks in the 1904 date system count days from 1904-01-01 (ECMA-376 §18.17.4.1). */
const EXCEL_1904_EPOCH_MS = Date.UTC(1904, 0, 1);
const DAY_MS = 86_400_000;
const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,3})\d*)?)?)?\s*(Z|[+-]\d{2}:?\d{2})?$/i;

/** ISO 8601 (offset honoured; none = UTC) or an Excel serial date, to epoch milliseconds. */
export function parseDateTime(cell: Cell, date1904 = false): number | Fault {
  if (cell instanceof Date) return Number.isNaN(cell.getTime()) ? fault("invalidDate") : cell.getTime();
  if (typeof cell === "number") {
    // Excel's serial day number (days since 1899-12-30), as a workbook stores dates.
    if (cell < 1 || cell > 2_958_465) return fault("serialNotDate", { value: String(cell) });
    return Math.round((date1904 ? EXCEL_1904_EPOCH_MS : EXCEL_EPOCH_MS) + cell * DAY_MS);
  }
  if (typeof cell !== "string") return fault("notADate");
  const m = ISO.exec(cell.trim());
  if (!m) return fault("notIso", { value: cell });
  const [, y, mo, d, h = "0", mi = "0", s = "0", ms = "0", zone] = m;
  let t = Date.UTC(+y!, +mo! - 1, +d!, +h, +mi, +s, +ms.padEnd(3, "0"));
  const check = new Date(t);
  if (check.getUTCMonth() !== +mo! - 1 || check.getUTCDate() !== +d! || +h > 23 || +mi > 59 || +s > 59) return fault("notRealDate", { value: cell });
  if (zone && zone.toUpperCase() !== "Z") {
    const sign = zone[0] === "-" ? -1 : 1;
    const digits = zone.slice(1).replace(":", "");
    t -= sign * (Number(digits.slice(0, 2)) * 60 + Number(digits.slice(2, 4))) * 60_000;
  }
  return t;
}

function parseNumber(cell: Cell, decimalComma: boolean): number | Fault {
  if (typeof cell === "number") return Number.isFinite(cell) ? cell : fault("notFinite");
  if (typeof cell === "boolean" || cell instanceof Date) return fault("notANumber");
  if (typeof cell !== "string") return fault("notANumber");
  let s = cell.trim().replace(/\s/g, "");
  if (decimalComma || /^-?\d+,\d+$/.test(s)) s = s.replace(",", ".");
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(s)) return fault("notANumberValue", { value: cell });
  return Number(s);
}

function parseBoolean(cell: Cell): boolean | Fault {
  if (typeof cell === "boolean") return cell;
  if (typeof cell === "number" && (cell === 0 || cell === 1)) return cell === 1;
  if (typeof cell === "string") {
    const s = cell.trim().toLowerCase();
    if (["true", "yes", "y", "1", "x"].includes(s)) return true;
    if (["false", "no", "n", "0"].includes(s)) return false;
  }
  return fault("notBoolean", { value: String(cell) });
}

/** A cell's number as a text (six significant digits). */
function fmt(n: number) {
  return Number.isInteger(n) ? String(n) : String(+n.toPrecision(6));
}
/** The same number inside a refusal, in the reader's decimal style and without grouping (0.75 · 0,75). */
const quantity = (n: number) => figure(Number.isInteger(n) ? n : +n.toPrecision(6), { group: false });

/** "is outside 0–150 °C", "at least 0 mm", "at most 40 t": a value beyond its column's bounds. */
function outside(spec: ColumnSpec, n: number): Fault {
  const unit = spec.unit ? ` ${spec.unit}` : "";
  if (spec.min !== undefined && spec.max !== undefined) return fault("outside", { value: quantity(n), min: quantity(spec.min), max: quantity(spec.max), unit });
  if (spec.min !== undefined) return fault("outsideAtLeast", { value: quantity(n), min: quantity(spec.min), unit });
  return fault("outsideAtMost", { value: quantity(n), max: quantity(spec.max!), unit });
}

/** What a cell holds instead of a value, as the readers mark it: in the reader's words where known, else as written (an Excel error such as #N/A). */
const CELL_ERRORS: Record<string, string> = { "a nested value": "nested", "a reference to a missing shared text": "missingSharedText" };
const cellErrorWords = (what: string) => (Object.hasOwn(CELL_ERRORS, what) ? { terms: [`server:errors.imports.rows.cellErrors.${CELL_ERRORS[what]}`] } : what);

/** One cell to its column's type; a Fault names its problem (errors.imports.rows.*). */
export function coerceCell(spec: ColumnSpec, cell: Cell, decimalComma: boolean, date1904 = false): Value | Fault {
  if (cell === null || (typeof cell === "string" && cell.trim() === "")) return null;
  if (typeof cell === "object" && cell !== null && "formulaWithoutValue" in cell) return fault("formula");
  if (typeof cell === "object" && cell !== null && "cellError" in cell) return fault("holds", { what: cellErrorWords(cell.cellError) });
  switch (spec.type) {
    case "text": {
      const s = (cell instanceof Date ? cell.toISOString() : typeof cell === "number" ? fmt(cell) : String(cell)).trim();
      if (s.length > 64) return fault("tooLong");
      return s;
    }
    case "number":
    case "integer": {
      const n = parseNumber(cell, decimalComma);
      if (isFault(n)) return n;
      if (spec.type === "integer" && !Number.isInteger(n)) return fault("notWhole", { value: quantity(n) });
      if ((spec.min !== undefined && n < spec.min) || (spec.max !== undefined && n > spec.max)) return outside(spec, n);
      return n;
    }
    case "datetime": {
      const t = parseDateTime(cell, date1904);
      return t;
    }
    case "boolean": {
      const b = parseBoolean(cell);
      return b;
    }
  }
}

/** A header problem, kept in the order it is reported: an empty header's is known once a value shows below it. */
type HeaderNote = { kind: "no header"; col: number } | { kind: "twice"; col: number; key: string; first: number };

/**
 * Maps the header to the kind's columns and coerces the cells, a batch of rows at a time (a large
 * workbook arrives a page of cells at a time from its reader thread). Row errors go to the list given
 * with each batch; the header's problems are added at the end (`headerErrorsInto`), because whether
 * a column without a header holds values is known only once every row has been seen.
 */
export class TableChecker {
  /** The header names every required key (and at least one known key): the rows can be planned. */
  readonly headerOk: boolean;
  private readonly noKnownKey: boolean;
  private readonly notes: HeaderNote[] = [];
  private readonly unknown: string[] = [];
  private readonly missing: string[];
  private readonly present: { spec: ColumnSpec; col: number }[] = [];
  /** Columns whose first filled row a header problem needs, and that row (as the file numbers it). */
  private readonly watched: number[] = [];
  private readonly firstFilled = new Map<number, number>();
  private readonly width: number;

  constructor(
    private readonly kind: ImportKind,
    headers: readonly string[],
    private readonly format: Table["format"],
    private readonly decimalComma: boolean,
    private readonly date1904?: boolean,
  ) {
    const specs = IMPORT_COLUMNS[kind];
    const byKey = new Map(specs.map((s) => [s.key, s]));
    const seen = new Map<string, number>();
    headers.forEach((raw, col) => {
      const key = raw.trim().toLowerCase();
      if (key === "") {
        this.notes.push({ kind: "no header", col });
        this.watched.push(col);
        return;
      }
      const spec = byKey.get(key);
      if (!spec) {
        this.unknown.push(raw.trim());
        return;
      }
      if (seen.has(key)) {
        this.notes.push({ kind: "twice", col, key, first: seen.get(key)! });
        // The feed's header has no row of its own: the problem is shown on the first item using the key.
        if (format === "json") this.watched.push(col);
        return;
      }
      seen.set(key, col);
      this.present.push({ spec, col });
    });
    this.width = headers.length;
    this.noKnownKey = seen.size === 0;
    this.missing = specs.filter((s) => s.required && !seen.has(s.key)).map((s) => s.key);
    this.headerOk = !this.noKnownKey && this.missing.length === 0;
  }

  /** The header's problems known so far (an empty header's counts once a value shows below it). */
  get headerErrorCount(): number {
    let n = this.notes.filter((note) => note.kind === "twice" || this.firstFilled.has(note.col)).length;
    if (this.noKnownKey) n++;
    else n += (this.unknown.length > 0 ? 1 : 0) + (this.missing.length > 0 ? 1 : 0);
    return n;
  }

  /** Checks the next rows of the file; their problems go to `errors`. */
  check(body: CellStore, errors: ErrorList): ParsedRows {
    for (const col of this.watched) {
      if (this.firstFilled.has(col)) continue;
      for (let r = 0; r < body.length; r++) {
        if (body.filled(r, col)) {
          this.firstFilled.set(col, body.rowNo(r));
          break;
        }
      }
    }
    // Not one known key: the wrong file, or the wrong import. Said once (headerErrorsInto) instead of per row.
    if (this.noKnownKey) return new ParsedRows(new Int32Array(0), []);
    const rowNos = new Int32Array(body.length);
    for (let r = 0; r < body.length; r++) rowNos[r] = body.rowNo(r);
    const { present, width } = this;
    const rows = new ParsedRows(
      rowNos,
      present.map((p) => p.spec),
    );
    for (let r = 0; r < body.length; r++) {
      const rowNo = rowNos[r]!;
      const cells = body.width(r);
      if (cells > width) {
        for (let c = width; c < cells; c++) {
          if (body.filled(r, c)) {
            errors.add(rowNo, null, said("imports.rows.moreCells", { cells, width }));
            rows.markBad(r);
            break;
          }
        }
      }
      const invalid = body.invalid(r);
      if (invalid !== undefined) {
        errors.add(rowNo, null, invalid);
        rows.markInvalid(r);
        continue;
      }
      for (const { spec, col } of present) {
        const v = coerceCell(spec, body.cell(r, col), this.decimalComma, this.date1904);
        if (isFault(v)) {
          errors.add(rowNo, spec.key, said(`imports.rows.${v.fault}`, { ...v.values, column: spec.key }));
          rows.markBad(r);
          continue; // stays empty
        }
        if (v === null && spec.required) {
          errors.add(rowNo, spec.key, said("imports.rows.required", { column: spec.key }));
          rows.markBad(r);
        }
        if (v !== null) rows.set(r, spec.key, v);
      }
    }
    return rows;
  }

  /** After the last rows: the header's problems, in the order a whole table reports them. */
  headerErrorsInto(errors: ErrorList): void {
    for (const note of this.notes) {
      if (note.kind === "no header") {
        if (this.firstFilled.has(note.col)) errors.add(1, null, said("imports.rows.noHeader", { n: note.col + 1 }));
      } else {
        const row = this.format === "json" ? (this.firstFilled.get(note.col) ?? 1) : 1;
        errors.add(row, note.key, said("imports.rows.columnTwice", { key: note.key, first: note.first + 1, second: note.col + 1 }));
      }
    }
    if (this.noKnownKey) {
      errors.add(1, null, said("imports.rows.noKnownKey", { kind: { terms: [`server:errors.imports.kinds.${this.kind}`] } }));
      return;
    }
    const { unknown, missing } = this;
    if (unknown.length > 0) {
      // Reported, and the rows are still checked, so one round of corrections fixes the file.
      errors.add(1, unknown.join(", "), said("imports.rows.unknownColumns", { count: unknown.length, columns: unknown.join(", ") }));
    }
    if (missing.length > 0) errors.add(1, missing.join(", "), said("imports.rows.missingColumns", { count: missing.length, columns: missing.join(", ") }));
  }
}

/**
 * Maps the header to the kind's columns and coerces every cell. Header problems (unknown, missing
 * or repeated keys) are reported on row 1 (for the JSON feed: on the first item that shows them),
 * before the rows' own.
 */
export function coerceTable(table: Table, kind: ImportKind, errors: ErrorList): { rows: ParsedRows; headerOk: boolean } {
  const checker = new TableChecker(kind, table.headers, table.format, table.decimalComma, table.date1904);
  const rowErrors = new ErrorList(errors.keep);
  const rows = checker.check(table.body, rowErrors);
  checker.headerErrorsInto(errors);
  errors.append(rowErrors);
  return { rows, headerOk: checker.headerOk };
}
