/**
 * A large workbook imported while it is read (issue 14): a reader thread sends the sheet a page of
 * cells at a time and the import thread checks and writes each page inside one transaction
 * (import.service.ts, runImportStreamed). Held here to the whole-table import on copies of one real
 * database: the same rows, ids, cast times and conditions; the same answers and errors in the same
 * order; nothing written when a file is refused; the write lock let go when the reader keeps it waiting.
 */
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import type request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { IMPORT_LIMITS } from "@shared/api/imports";
import { CellStore } from "../../server/import/cell-store";
import { runImportTask, type ImportOutcome, type ImportTask } from "../../server/import/import-worker";
import { readXlsxFile } from "../../server/import/read-xlsx";
import { STREAM_FROM_BYTES, type SheetEvent } from "../../server/import/sheet-reader";
import { openDatabase } from "../../server/db/client";
import { runImportStreamed } from "../../server/services/import.service";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { xlsx, type Row } from "../helpers/workbooks";

let t: TestApp;
let agent: request.Agent;
/** The seeded plant, and the same with this file's heats imported (the whole-table way). */
let plantDb: string;
let heatedDb: string;
const files: Record<string, string> = {};

const HEAT_KEYS = ["heat_no", "sequence_no", "caster", "grade", "cast_start", "cast_end", "casting_speed_m_min", "tundish_temp_c", "c_pct", "si_pct", "mn_pct"];
const SLAB_KEYS = ["slab_id", "heat_no", "strand", "piece_no", "length_mm", "width_mm", "thickness_mm", "cast_length_start_m", "transition"];
const HEATS = 1300;
const heatNo = (i: number) => `PL${String(i).padStart(5, "0")}`;
const castStart = (i: number) => Date.UTC(2027, 2, 1) + i * 40 * 60_000;
const speedOf = (i: number) => 1.3 + (i % 5) * 0.05;
/** Heats whose strand-1 first piece comes last in the slab file, after the pieces above it were written. */
const late = (i: number) => i % 50 === 7;
/** Cells per page in the tests that set it: 100 rows of 9 cells, some 80 pages for the slab file. */
const PAGE_CELLS = 900;

let heatRows: Row[];
let slabRows: Row[];

function copyOf(from: string, name: string) {
  const file = path.join(t.dir, `${name}.db`);
  fs.copyFileSync(from, file);
  return file;
}

function task(databaseFile: string, kind: "heats" | "slabs", file: string, extra: Partial<ImportTask> = {}): ImportTask {
  return {
    databaseFile,
    kind,
    dryRun: false,
    source: "upload",
    file,
    fileName: path.basename(file),
    by: { actor: "test" },
    limits: IMPORT_LIMITS,
    heapMb: 512,
    measure: true,
    ...extra,
  };
}
// Written ahead whatever the machine's load: how long the lock may wait for the reader is tested on its own below.
const streamed = { fromBytes: 0, pageCells: PAGE_CELLS, writeAheadIdleMs: 60_000 };
const whole = { fromBytes: Number.MAX_SAFE_INTEGER };

/** What an import writes, without the clock's columns: heats, sequences, slabs, their conditions, the runs. */
function dump(file: string) {
  const db = new Database(file, { readonly: true });
  try {
    const out: Record<string, Record<string, unknown>[]> = {};
    const tables: [string, string[]][] = [
      ["heats", ["created_at", "updated_at"]],
      ["sequences", ["created_at", "updated_at"]],
      ["slabs", ["created_at", "updated_at"]],
      ["slab_conditions", ["computed_at"]],
      ["import_runs", ["started_at", "finished_at"]],
    ];
    for (const [table, clock] of tables) {
      out[table] = (db.prepare(`select * from ${table} order by rowid`).all() as Record<string, unknown>[]).map((r) => {
        for (const c of clock) delete r[c];
        return r;
      });
    }
    return out;
  } finally {
    db.close();
  }
}

/** The lock is free: another connection takes it at once (and lets it go). */
function lockIsFree(file: string): boolean {
  const other = new Database(file);
  try {
    other.pragma("busy_timeout = 0");
    other.exec("begin immediate");
    other.exec("rollback");
    return true;
  } catch (err) {
    if ((err as { code?: string }).code === "SQLITE_BUSY") return false;
    throw err;
  } finally {
    other.close();
  }
}

const ok = (o: ImportOutcome | null) => {
  if (!o?.ok) throw new Error(`import refused: ${JSON.stringify(o).slice(0, 400)}`);
  return o;
};

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  agent = await t.agentFor("process");
  plantDb = path.join(t.dir, "plant.db");
  t.db.$client.exec(`vacuum into '${plantDb}'`);

  // Three stored heats come again with another speed (updated; their stored slabs resolved again at the end).
  const stored = t.db.$client
    .prepare(
      `select h.heat_no, c.code as caster, g.code as grade, h.cast_start, h.cast_end, q.sequence_no
       from heats h join casters c on c.id = h.caster_id join grades g on g.id = h.grade_id left join sequences q on q.id = h.sequence_id
       order by h.id limit 3`,
    )
    .all() as { heat_no: string; caster: string; grade: string; cast_start: number; cast_end: number | null; sequence_no: string | null }[];
  heatRows = Array.from({ length: HEATS }, (_, i) => ({
    heat_no: heatNo(i),
    sequence_no: `PLSEQ-${Math.floor(i / 8)}`,
    caster: "CC2",
    grade: "LV-ST32",
    cast_start: new Date(castStart(i)),
    cast_end: new Date(castStart(i) + 32 * 60_000),
    casting_speed_m_min: speedOf(i),
    tundish_temp_c: 1545,
    c_pct: 0.12,
    si_pct: 0.2,
    mn_pct: 0.9,
  }));
  heatRows.splice(
    350,
    0,
    ...stored.map((h) => ({
      heat_no: h.heat_no,
      sequence_no: h.sequence_no,
      caster: h.caster,
      grade: h.grade,
      cast_start: new Date(h.cast_start),
      cast_end: h.cast_end === null ? null : new Date(h.cast_end),
      casting_speed_m_min: 1.11,
    })),
  );

  // Two strands of three pieces per heat; four stored slabs come again, longer (updated).
  const storedSlabs = t.db.$client
    .prepare(
      `select s.slab_id, h.heat_no, st.strand_no, s.piece_no, s.length_mm, s.width_mm, s.thickness_mm
       from slabs s join heats h on h.id = s.heat_id join strands st on st.id = s.strand_id order by s.id limit 4`,
    )
    .all() as { slab_id: string; heat_no: string; strand_no: number; piece_no: number; length_mm: number; width_mm: number; thickness_mm: number }[];
  const first: Row[] = storedSlabs.map((s) => ({
    slab_id: s.slab_id,
    heat_no: s.heat_no,
    strand: s.strand_no,
    piece_no: s.piece_no,
    length_mm: s.length_mm + 100,
    width_mm: s.width_mm,
    thickness_mm: s.thickness_mm,
  }));
  const body: Row[] = [];
  const last: Row[] = [];
  for (let i = 0; i < HEATS; i++) {
    for (const strand of [1, 2]) {
      for (const piece of [1, 2, 3]) {
        const row: Row = {
          slab_id: `${heatNo(i)}-${strand}0${piece}`,
          heat_no: heatNo(i),
          strand,
          piece_no: piece,
          length_mm: 9000 + piece * 500,
          width_mm: 1500,
          thickness_mm: 230,
          cast_length_start_m: i % 2 === 0 ? (piece - 1) * 10 : null,
          transition: piece === 1 && i % 8 === 0,
        };
        (late(i) && strand === 1 && piece === 1 ? last : body).push(row);
      }
    }
  }
  slabRows = [...first, ...body, ...last];

  const write = async (name: string, keys: string[], rows: Row[]) => {
    files[name] = path.join(t.dir, `${name}.xlsx`);
    fs.writeFileSync(files[name], await xlsx(keys, rows));
  };
  await write("heats", HEAT_KEYS, heatRows);
  await write("slabs", SLAB_KEYS, slabRows);
  // Problems on several pages: a strand that is no number (page 2), an unknown heat (page 5), a
  // piece a stored slab holds (page 20), a slab named twice (the last page).
  const bad = slabRows.map((r) => ({ ...r }));
  bad[150]!.strand = "x";
  bad[450]!.heat_no = "NOSUCHHEAT";
  bad[2000]!.slab_id = "PLNEW-0001";
  bad[2000]!.heat_no = storedSlabs[0]!.heat_no;
  bad[2000]!.strand = storedSlabs[0]!.strand_no;
  bad[2000]!.piece_no = storedSlabs[0]!.piece_no;
  bad[bad.length - 1]!.slab_id = bad[10]!.slab_id!;
  await write("bad-slabs", SLAB_KEYS, bad);

  heatedDb = copyOf(plantDb, "heated");
  ok(await runImportTask(task(heatedDb, "heats", files.heats!, { streaming: whole })));
}, 120_000);
afterAll(() => t?.close());

describe("a workbook imported while it is read", () => {
  it("when heats and then slabs are imported a page at a time, then the database ends exactly as after the whole-table import", async () => {
    const a = copyOf(plantDb, "a");
    const b = copyOf(plantDb, "b");
    const heatsA = ok(await runImportTask(task(a, "heats", files.heats!, { streaming: streamed })));
    const heatsB = ok(await runImportTask(task(b, "heats", files.heats!, { streaming: whole })));
    const slabsA = ok(await runImportTask(task(a, "slabs", files.slabs!, { streaming: streamed })));
    const slabsB = ok(await runImportTask(task(b, "slabs", files.slabs!, { streaming: whole })));
    // It did write ahead, page by page, and the whole-table import did not.
    expect(heatsA.timings?.["wrote ahead"]).toBe(1);
    expect(slabsA.timings?.["wrote ahead"]).toBe(1);
    expect(slabsB.timings?.["wrote ahead"]).toBeUndefined();
    expect(heatsA.result).toEqual(heatsB.result);
    expect(slabsA.result).toEqual(slabsB.result);
    expect(heatsA.result.counts).toEqual({ created: HEATS, updated: 3, unchanged: 0 });
    expect(slabsA.result.counts).toEqual({ created: HEATS * 6, updated: 4, unchanged: 0 });
    expect(slabsA.result.slabsResolved).toBe(HEATS * 6 + 4);
    const sorted = (ids: number[] | "all" | null) => (Array.isArray(ids) ? [...ids].sort((x, y) => x - y) : ids);
    expect(sorted(slabsA.changedSlabs)).toEqual(sorted(slabsB.changedSlabs));
    const [da, db] = [dump(a), dump(b)];
    for (const table of Object.keys(db)) expect({ table, rows: da[table] }).toEqual({ table, rows: db[table] });

    // The pieces that came last were placed below the ones written before them: piece 1 starts with
    // the heat, piece 2 one piece-1 length (9.5 m) later at the heat's speed.
    const castAt = (slab: string) => {
      const db = new Database(a, { readonly: true });
      try {
        return db.prepare("select cast_at from slabs where slab_id = ?").pluck().get(slab) as number;
      } finally {
        db.close();
      }
    };
    expect(castAt(`${heatNo(7)}-101`)).toBe(castStart(7));
    expect(castAt(`${heatNo(7)}-102`)).toBe(Math.round(castStart(7) + (9.5 / speedOf(7)) * 60_000));
    expect(castAt(`${heatNo(7)}-103`)).toBe(Math.round(castStart(7) + ((9.5 + 10) / speedOf(7)) * 60_000));
  }, 120_000);

  it("when a file has problems on several pages, then it is refused with the errors the whole-table import lists, in its order, and nothing is written", async () => {
    const a = copyOf(heatedDb, "bad-a");
    const b = copyOf(heatedDb, "bad-b");
    const before = dump(a);
    const refusedA = await runImportTask(task(a, "slabs", files["bad-slabs"]!, { streaming: streamed }));
    const refusedB = await runImportTask(task(b, "slabs", files["bad-slabs"]!, { streaming: whole }));
    expect(refusedA).toMatchObject({
      ok: false,
      status: 422,
      code: "import_rejected",
      message: "4 problems found; nothing was imported. Correct the file and import it again.",
    });
    expect(refusedA).toEqual(refusedB);
    const details = (refusedA as { details: { errors: { row: number; column: string | null }[] } }).details;
    expect(details.errors.map((e) => [e.row, e.column])).toEqual([
      [152, "strand"],
      [452, "heat_no"],
      [2002, "piece_no"],
      [slabRows.length + 1, "slab_id"],
    ]);
    expect(dump(a)).toEqual(before);
    expect(lockIsFree(a)).toBe(true);

    // A dry run of the same file answers alike, writing nothing.
    const dryA = ok(await runImportTask(task(a, "slabs", files["bad-slabs"]!, { streaming: streamed, dryRun: true })));
    const dryB = ok(await runImportTask(task(b, "slabs", files["bad-slabs"]!, { streaming: whole, dryRun: true })));
    expect(dryA.result).toEqual(dryB.result);
    expect(dryA.result).toMatchObject({ dryRun: true, valid: false, errorCount: 4 });
    expect(dump(a)).toEqual(before);
  }, 120_000);

  it("when the reader refuses the file after pages were written (one row too many), then 413 and the database and its lock are as before", async () => {
    const a = copyOf(heatedDb, "late-refusal");
    const before = dump(a);
    const limits = { ...IMPORT_LIMITS, rows: slabRows.length - 1 };
    const refused = await runImportTask(task(a, "slabs", files.slabs!, { streaming: streamed, limits }));
    expect(refused).toEqual({
      ok: false,
      status: 413,
      code: "import_too_large",
      message: `The sheet has more than ${(slabRows.length - 1).toLocaleString("en-GB")} data rows; nothing was imported. Split it into smaller files.`,
      details: { limitRows: slabRows.length - 1 },
      // The refusal's catalogue key, so the main thread answers in the asker's language.
      said: [{ key: "imports.workbook.tooManyRows", values: { rows: { num: slabRows.length - 1 } } }],
    });
    expect(dump(a)).toEqual(before);
    expect(lockIsFree(a)).toBe(true);
  }, 120_000);
});

describe("the write lock while writing ahead", () => {
  /** The slab file's rows as pages of 100, from a sheet that pauses after the third page. */
  async function* pausingSheet(pauseMs: number, during: () => void): AsyncGenerator<SheetEvent> {
    const table = await readXlsxFile(files.slabs!);
    yield { type: "header", headers: table.headers, date1904: false };
    let page = new CellStore();
    let pages = 0;
    for (let r = 0; r < table.body.length; r++) {
      page.push(table.body.rowNo(r), table.body.cells(r));
      if (page.length < 100 && r < table.body.length - 1) continue;
      yield { type: "rows", rows: page };
      page = new CellStore();
      if (++pages === 3) {
        await new Promise((resolve) => setTimeout(resolve, pauseMs / 2));
        during();
        await new Promise((resolve) => setTimeout(resolve, pauseMs / 2));
      }
    }
  }

  const importPausing = async (file: string, writeAheadIdleMs: number, pauseMs: number, during: () => void) => {
    const db = openDatabase(file);
    const timings: Record<string, number> = {};
    try {
      const result = await runImportStreamed(
        db,
        {
          kind: "slabs",
          sheet: pausingSheet(pauseMs, during),
          dryRun: false,
          fileName: "slabs.xlsx",
          sha256: () => Promise.resolve(null),
          source: "upload",
          by: { actor: "test" },
          writeAheadIdleMs,
        },
        timings,
      );
      return { result, timings };
    } finally {
      db.$client.close();
    }
  };

  it("when the reader is on time, then the lock is held from the first page to the commit; when it keeps the import waiting past the allowance, then the pages written are rolled back, the lock let go, and the import ends the same", async () => {
    const reference = copyOf(heatedDb, "lock-reference");
    ok(await runImportTask(task(reference, "slabs", files.slabs!, { streaming: whole })));

    const held = copyOf(heatedDb, "lock-held");
    let freeWhileWaiting: boolean | null = null;
    const a = await importPausing(held, 10_000, 200, () => (freeWhileWaiting = lockIsFree(held)));
    expect(freeWhileWaiting).toBe(false);
    expect(a.timings["wrote ahead"]).toBe(1);
    expect(lockIsFree(held)).toBe(true);

    const released = copyOf(heatedDb, "lock-released");
    let freeAfterAllowance: boolean | null = null;
    const b = await importPausing(released, 50, 1000, () => (freeAfterAllowance = lockIsFree(released)));
    expect(freeAfterAllowance).toBe(true);
    expect(b.timings["wrote ahead"]).toBeUndefined();

    expect(a.result).toEqual(b.result);
    expect(a.result).toMatchObject({ valid: true, rows: slabRows.length, counts: { created: HEATS * 6, updated: 4, unchanged: 0 } });
    const expected = dump(reference);
    // The hand-made sheet has no file: its run row has no SHA-256.
    for (const file of [held, released]) {
      const got = dump(file);
      expect(got.import_runs!.at(-1)!.sha256).toBeNull();
      got.import_runs!.at(-1)!.sha256 = expected.import_runs!.at(-1)!.sha256;
      for (const table of Object.keys(expected)) expect({ table, rows: got[table] }).toEqual({ table, rows: expected[table] });
    }
  }, 120_000);
});

describe("through the app", () => {
  it("when a slab workbook larger than the streaming threshold is uploaded, then it is imported; with one bad row at its end, nothing of it is", async () => {
    const upload = (kind: string, file: string) =>
      agent.post(`/api/import/${kind}`).set("Origin", t.env.BETTER_AUTH_URL).attach("file", fs.readFileSync(file), path.basename(file));
    const count = () => t.db.$client.prepare("select count(*) from slabs where slab_id like 'PL%'").pluck().get() as number;
    expect(fs.statSync(files.slabs!).size).toBeGreaterThan(STREAM_FROM_BYTES);
    expect((await upload("heats", files.heats!)).status).toBe(201);
    const refused = await upload("slabs", files["bad-slabs"]!);
    expect(refused.status).toBe(422);
    expect(refused.body.error.details.errorCount).toBe(4);
    expect(count()).toBe(0);
    const res = await upload("slabs", files.slabs!);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(201);
    expect(res.body).toMatchObject({
      valid: true,
      rows: slabRows.length,
      counts: { created: HEATS * 6, updated: 4, unchanged: 0 },
      slabsResolved: HEATS * 6 + 4,
    });
    expect(count()).toBe(HEATS * 6);
  }, 120_000);
});
