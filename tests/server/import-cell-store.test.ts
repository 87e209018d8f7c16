/**
 * The compact cells an import is checked from (server/import/cell-store.ts) and the checked values
 * by column (ParsedRows in server/import/coerce.ts): every kind of cell comes back as it went in,
 * across the store's page boundaries, and the checked columns give the values and the gaps the plans
 * read. The readers' own cases are in read-xlsx.test.ts and imports.test.ts.
 */
import { describe, expect, it } from "vitest";
import { CellStore, makeTable } from "../../server/import/cell-store";
import { coerceTable, ErrorList } from "../../server/import/coerce";
import { tableFromJson, type Cell } from "../../server/import/read-table";

describe("the compact cell store", () => {
  it("when every kind of cell is stored, then each comes back as it went in, and a row reads empty past its last cell", () => {
    const when = new Date(Date.UTC(2026, 10, 3, 14, 20));
    const row: (Cell | undefined)[] = [
      3.25,
      -17,
      0,
      "B000001",
      "",
      true,
      false,
      46023.5,
      null,
      undefined,
      { formulaWithoutValue: true },
      { cellError: "#REF!" },
      when,
    ];
    const store = new CellStore();
    store.push(2, row);
    store.push(5, [1_000_000_000_000.5, "x"]);
    store.push(7, [], "This item is not an object with the import's keys.");

    expect(store.length).toBe(3);
    expect(store.cells(0)).toEqual([
      3.25,
      -17,
      0,
      "B000001",
      "",
      true,
      false,
      46023.5,
      null,
      null,
      { formulaWithoutValue: true },
      { cellError: "#REF!" },
      when,
    ]);
    expect(store.cell(0, 12)).toBe(when);
    expect([store.rowNo(0), store.rowNo(1), store.rowNo(2)]).toEqual([2, 5, 7]);
    expect([store.width(0), store.width(1), store.width(2)]).toEqual([13, 2, 0]);
    expect(store.cell(1, 0)).toBe(1_000_000_000_000.5);
    // Past the row's last cell, and before the first: empty.
    expect(store.cell(1, 2)).toBeNull();
    expect(store.cell(1, -1)).toBeNull();
    expect(store.cells(1, 4)).toEqual([1_000_000_000_000.5, "x", null, null]);
    // An empty text is a filled cell (as it was in row arrays); null and a missing cell are not.
    expect([store.filled(0, 4), store.filled(0, 8), store.filled(0, 9), store.filled(1, 5)]).toEqual([true, false, false, false]);
    expect(store.invalid(2)).toBe("This item is not an object with the import's keys.");
    expect(store.invalid(0)).toBeUndefined();
  });

  it("when 70,000 rows fill more than three pages, then every cell on either side of each page edge is the one stored", () => {
    const store = new CellStore();
    const rows = 70_000;
    for (let i = 0; i < rows; i++) store.push(i + 2, [`S${i}`, i * 0.5, i % 3 === 0, i % 7 === 0 ? null : -i]);
    expect(store.length).toBe(rows);
    let wrong = 0;
    for (let i = 0; i < rows; i++) {
      if (
        store.cell(i, 0) !== `S${i}` ||
        store.cell(i, 1) !== i * 0.5 ||
        store.cell(i, 2) !== (i % 3 === 0) ||
        store.cell(i, 3) !== (i % 7 === 0 ? null : -i) ||
        store.rowNo(i) !== i + 2
      )
        wrong++;
    }
    expect(wrong).toBe(0);
    // 4 cells a row, 65,536 a page: cell 65,536 is row 16,384's first.
    expect(store.cells(16_383)).toEqual(["S16383", 8191.5, true, -16383]);
    expect(store.cells(16_384)).toEqual(["S16384", 8192, false, -16384]);
    expect(store.cells(49_151)).toEqual(["S49151", 24575.5, false, -49151]);
    expect(store.cells(49_152)).toEqual(["S49152", 24576, true, -49152]);
  });

  it("when the same text repeats down a column, then it reads back equal on every row; after release nothing is held", () => {
    const store = new CellStore();
    for (let i = 0; i < 10; i++) store.push(i + 2, [`B00000${Math.floor(i / 5)}`, "CC2"]);
    expect(Array.from({ length: 10 }, (_, i) => store.cell(i, 0))).toEqual([...Array(5).fill("B000000"), ...Array(5).fill("B000001")]);
    expect(Array.from({ length: 10 }, (_, i) => store.cell(i, 1))).toEqual(Array(10).fill("CC2"));
    store.release();
    expect(store.length).toBe(0);
  });

  it("when a table's rows are asked for, then they are built from the cells: a feed's rows as wide as its header, its non-objects marked", () => {
    const body = new CellStore();
    body.push(2, [1.5, null, null, 4]);
    body.push(4, [7]);
    const sheet = makeTable({ format: "xlsx", headers: ["a", "b", "c", "d"], body, decimalComma: false });
    expect(sheet.rows).toEqual([
      { rowNo: 2, cells: [1.5, null, null, 4] },
      { rowNo: 4, cells: [7] },
    ]);
    const feed = tableFromJson([{ slab_id: "a1", strand: 2 }, 5, { piece_no: 3 }], "slabs");
    expect(feed.headers).toEqual(["slab_id", "strand", "piece_no"]);
    expect(feed.rows).toEqual([
      { rowNo: 1, cells: ["a1", 2, null] },
      { rowNo: 2, cells: [null, null, null], invalid: "This item is not an object with the import's keys." },
      { rowNo: 3, cells: [null, null, 3] },
    ]);
  });
});

describe("the checked values by column", () => {
  it("when a slab sheet is checked, then texts, whole numbers, numbers and yes/no come back typed, empty cells as null, a bad cell as an error on its row", () => {
    const body = new CellStore();
    const headers = ["slab_id", "heat_no", "strand", "piece_no", "length_mm", "width_mm", "thickness_mm", "transition", "cast_length_start_m"];
    body.push(2, [" b000001-101 ", "B000001", 1, 1, 10_000, 1500, 230, true, 12.5]);
    body.push(3, ["B000001-102", "B000001", "2", 2, "9800,5", 1500, 230, "no"]);
    body.push(4, ["B000001-103", "B000001", 1, 2.5, 10_000, 1500, 230, "maybe", null]);
    const errors = new ErrorList();
    const { rows, headerOk } = coerceTable(makeTable({ format: "xlsx", headers, body, decimalComma: false }), "slabs", errors);
    expect(headerOk).toBe(true);
    expect(rows.length).toBe(3);
    const all = [...rows].map((r) => ({ rowNo: r.rowNo, bad: r.bad, values: headers.map((k) => r.values.get(k)) }));
    expect(all).toEqual([
      { rowNo: 2, bad: false, values: ["b000001-101", "B000001", 1, 1, 10_000, 1500, 230, true, 12.5] },
      { rowNo: 3, bad: false, values: ["B000001-102", "B000001", 2, 2, 9800.5, 1500, 230, false, null] },
      { rowNo: 4, bad: true, values: ["B000001-103", "B000001", 1, null, 10_000, 1500, 230, null, null] },
    ]);
    expect(errors.list).toEqual([
      { row: 4, column: "piece_no", message: "piece_no 2.5 is not a whole number." },
      { row: 4, column: "transition", message: "transition “maybe” is not true or false." },
    ]);
    // A column the file does not have is absent (a re-import keeps the stored value), not empty.
    const first = rows.row(0).values;
    expect([first.has("cast_length_start_m"), first.has("weight_t"), first.get("weight_t")]).toEqual([true, false, undefined]);
  });

  it("when a heat's times are Excel serial days, then they are checked to epoch milliseconds", () => {
    const body = new CellStore();
    body.push(2, ["H1", "CC2", "LV-ST32", 46023.5, 46023.75, 1.4]);
    const errors = new ErrorList();
    const { rows } = coerceTable(
      makeTable({ format: "xlsx", headers: ["heat_no", "caster", "grade", "cast_start", "cast_end", "casting_speed_m_min"], body, decimalComma: false }),
      "heats",
      errors,
    );
    expect(errors.list).toEqual([]);
    expect([rows.get(0, "cast_start"), rows.get(0, "cast_end")]).toEqual([Date.UTC(2026, 0, 1, 12), Date.UTC(2026, 0, 1, 18)]);
  });

  it("when a feed item is not an object, then its row is bad, named in the errors, and has no values at all", () => {
    const errors = new ErrorList();
    const { rows } = coerceTable(tableFromJson([{ product_id: "C1", kind: "coil", slab_id: "S1" }, "C2"], "products"), "products", errors);
    expect([rows.has(0, "kind"), rows.get(0, "kind"), rows.bad(0)]).toEqual([true, "coil", false]);
    expect([rows.has(1, "kind"), rows.get(1, "kind"), rows.bad(1), rows.rowNo(1)]).toEqual([false, undefined, true, 2]);
    expect(errors.list).toEqual([{ row: 2, column: null, message: "This item is not an object with the import's keys." }]);
  });
});
