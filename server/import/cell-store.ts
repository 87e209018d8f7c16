/**
 * The cells of an import's rows, held compactly while the file is checked: one byte saying what
 * each cell is and one 8-byte slot for its number (or the index of its text), instead of an array
 * of boxed values per row. A sheet of 100,000 rows × 9 columns takes about 9 MB here against
 * about 30 MB as row arrays. A text equal to the one above it in the same column (a heat number
 * repeated on each of its slabs) is stored once. `release()` frees the cells once they are checked.
 * A store can be sent to another thread (`detach()` / `CellStore.attach()`): its pages are moved, not copied.
 * Ours: no well-kept library keeps spreadsheet cells of mixed kinds in typed pages like this.
 */

const EMPTY = 0;
const NUMBER = 1;
const TEXT = 2;
const TRUE = 3;
const FALSE = 4;
/** A Date (the JSON feed never sends one; kept for callers that do), a formula without value, a cell error. */
const OTHER = 5;

type OtherCell = Exclude<Cell, string | number | boolean | null>;

/** Cells per page: the cells are kept in fixed pages, so growing never copies (nor leaves the old copy to the collector). */
const PAGE_BITS = 16;
const PAGE = 1 << PAGE_BITS;
const MASK = PAGE - 1;

export class CellStore {
  /** What each cell holds, by page. */
  private kinds: Uint8Array<ArrayBuffer>[] = [];
  /** The number, or the index of the text in `texts` / of the cell in `others`, by page. */
  private slots: Float64Array<ArrayBuffer>[] = [];
  private texts: string[] = [];
  private others: OtherCell[] = [];
  /** Row r's cells are the cells starts[r] … starts[r + 1] − 1. */
  private starts = new Int32Array(4097);
  private rowNos = new Int32Array(4096);
  private invalids = new Map<number, string>();
  /** Per column, the last text stored and its index in `texts` (a repeat points to the same entry). */
  private lastText: (string | undefined)[] = [];
  private lastTextAt: number[] = [];
  private used = 0;
  /** Rows held. */
  length = 0;

  /** Cells held (trailing empties within a row included). */
  get cellCount(): number {
    return this.used;
  }

  /** Adds a row: its row number as a person sees it, its cells in header order, and why it is unusable (the feed's non-objects). */
  push(rowNo: number, cells: readonly (Cell | undefined)[], invalid?: string): void {
    const n = cells.length;
    while (this.used + n > this.kinds.length * PAGE) {
      this.kinds.push(new Uint8Array(PAGE));
      this.slots.push(new Float64Array(PAGE));
    }
    if (this.length + 1 >= this.rowNos.length) this.growRows();
    let at = this.used;
    for (let c = 0; c < n; c++, at++) {
      const kinds = this.kinds[at >>> PAGE_BITS]!;
      const slots = this.slots[at >>> PAGE_BITS]!;
      const k = at & MASK;
      const cell = cells[c];
      if (cell === null || cell === undefined) kinds[k] = EMPTY;
      else if (typeof cell === "number") {
        kinds[k] = NUMBER;
        slots[k] = cell;
      } else if (typeof cell === "string") {
        kinds[k] = TEXT;
        if (this.lastText[c] === cell) slots[k] = this.lastTextAt[c]!;
        else {
          this.lastText[c] = cell;
          slots[k] = this.lastTextAt[c] = this.texts.push(cell) - 1;
        }
      } else if (typeof cell === "boolean") kinds[k] = cell ? TRUE : FALSE;
      else {
        kinds[k] = OTHER;
        slots[k] = this.others.push(cell) - 1;
      }
    }
    if (invalid !== undefined) this.invalids.set(this.length, invalid);
    this.rowNos[this.length] = rowNo;
    this.length++;
    this.starts[this.length] = at;
    this.used = at;
  }

  rowNo(row: number): number {
    return this.rowNos[row]!;
  }

  /** Cells stored for the row (trailing empties included, as the file had them). */
  width(row: number): number {
    return this.starts[row + 1]! - this.starts[row]!;
  }

  invalid(row: number): string | undefined {
    return this.invalids.get(row);
  }

  private kindAt(row: number, col: number): number {
    const start = this.starts[row]!;
    if (col < 0 || col >= this.starts[row + 1]! - start) return EMPTY;
    const at = start + col;
    return this.kinds[at >>> PAGE_BITS]![at & MASK]!;
  }

  /** The cell, null when empty or beyond the row's last cell. */
  cell(row: number, col: number): Cell {
    const kind = this.kindAt(row, col);
    if (kind === EMPTY) return null;
    if (kind === TRUE) return true;
    if (kind === FALSE) return false;
    const at = this.starts[row]! + col;
    const slot = this.slots[at >>> PAGE_BITS]![at & MASK]!;
    return kind === NUMBER ? slot : kind === TEXT ? this.texts[slot]! : this.others[slot]!;
  }

  /** Whether the cell holds anything (an empty text counts, as it did in row arrays). */
  filled(row: number, col: number): boolean {
    return this.kindAt(row, col) !== EMPTY;
  }

  /** The row as an array of cells, padded with nulls to `minWidth`. */
  cells(row: number, minWidth = 0): Cell[] {
    const n = Math.max(this.width(row), minWidth);
    const out: Cell[] = [];
    for (let c = 0; c < n; c++) out.push(this.cell(row, c));
    return out;
  }

  /** Frees the cells: the store is empty afterwards. */
  release(): void {
    this.kinds = [];
    this.slots = [];
    this.texts = [];
    this.others = [];
    this.starts = new Int32Array(1);
    this.rowNos = new Int32Array(0);
    this.invalids = new Map();
    this.lastText = [];
    this.lastTextAt = [];
    this.used = 0;
    this.length = 0;
  }

  /**
   * The rows held, as structured-clone data for another thread, with the buffers to transfer (the
   * typed pages move, the texts are copied once each); the store is empty afterwards, ready for more.
   */
  detach(): { data: CellStoreData; transfer: ArrayBuffer[] } {
    const data: CellStoreData = {
      kinds: this.kinds,
      slots: this.slots,
      texts: this.texts,
      others: this.others,
      starts: this.starts,
      rowNos: this.rowNos,
      invalids: [...this.invalids],
      used: this.used,
      length: this.length,
    };
    const transfer = [...this.kinds, ...this.slots, this.starts, this.rowNos].map((a) => a.buffer);
    // Empty and ready for the next rows (release() leaves a store that is done with).
    this.kinds = [];
    this.slots = [];
    this.texts = [];
    this.others = [];
    this.starts = new Int32Array(4097);
    this.rowNos = new Int32Array(4096);
    this.invalids = new Map();
    this.lastText = [];
    this.lastTextAt = [];
    this.used = 0;
    this.length = 0;
    return { data, transfer };
  }

  /** A store over rows detached in another thread (read them; adding to it is not meant). */
  static attach(data: CellStoreData): CellStore {
    const store = new CellStore();
    store.kinds = data.kinds;
    store.slots = data.slots;
    store.texts = data.texts;
    store.others = data.others;
    store.starts = data.starts;
    store.rowNos = data.rowNos;
    store.invalids = new Map(data.invalids);
    store.used = data.used;
    store.length = data.length;
    return store;
  }

  private growRows() {
    const size = this.rowNos.length * 2;
    const rowNos = new Int32Array(size);
    rowNos.set(this.rowNos.subarray(0, this.length));
    this.rowNos = rowNos;
    const starts = new Int32Array(size + 1);
    starts.set(this.starts.subarray(0, this.length + 1));
    this.starts = starts;
  }
}

/** A table over compact cells, with `rows` built on demand. */
export function makeTable(fields: Omit<Table, "rows">): Table {
  const table = { ...fields } as Table;
  Object.defineProperty(table, "rows", {
    enumerable: false,
    get(): TableRow[] {
      const { body } = table;
      // The feed's rows are as wide as the header (keys an item lacks are empty).
      const width = table.format === "json" ? table.headers.length : 0;
      return Array.from({ length: body.length }, (_, r) => {
        const invalid = body.invalid(r);
        return invalid === undefined ? { rowNo: body.rowNo(r), cells: body.cells(r, width) } : { rowNo: body.rowNo(r), cells: body.cells(r, width), invalid };
      });
    },
  });
  return table;
}

export type Cell = string | number | boolean | Date | null | { formulaWithoutValue: true } | { cellError: string };

/** A store's rows as sent between threads (CellStore.detach / attach). */
export interface CellStoreData {
  kinds: Uint8Array<ArrayBuffer>[];
  slots: Float64Array<ArrayBuffer>[];
  texts: string[];
  others: OtherCell[];
  starts: Int32Array<ArrayBuffer>;
  rowNos: Int32Array<ArrayBuffer>;
  invalids: [number, string][];
  used: number;
  length: number;
}

export interface TableRow {
  /** The row number a person sees in the file (header = 1). */
  rowNo: number;
  /** The row's cells in header order. */
  cells: Cell[];
  /** Why the row cannot be used at all (the feed's items that are not objects). */
  invalid?: string;
}

export interface Table {
  format: "xlsx" | "csv" | "json";
  headers: string[];
  /** The rows' cells, held compactly (cell-store.ts); the import reads them from here. */
  body: CellStore;
  /**
   * The rows as arrays of cells, built from `body` on each read: for tests and small tables, never
   * the import's own path (a copy of 100,000 rows costs three times the compact cells).
   */
  readonly rows: TableRow[];
  /** CSV written with ; separators uses the decimal comma. */
  decimalComma: boolean;
  /** The workbook counts serial dates from 1904 (old Mac Excel) instead of 1900. */
  date1904?: boolean;
}
