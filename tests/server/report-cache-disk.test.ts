/**
 * Issue 14, memory at scale (server/services/report-cache-disk.ts): the report cache's condition
 * columns beyond REPORT_COLUMNS_MB are kept in files and read back when a report needs them. Every
 * report must give the answer it gives with every column in memory, to the last character; a change
 * to a slab must reach the file; the snapshot must hold the same bytes either way; and the files
 * must be neither left in the directory nor kept open once their facts are replaced.
 *
 * On a real SQLite file: the confounded plant of 1,500 heats × 8 slabs (tests/helpers/confounded-plant.ts),
 * with every value of one condition moved off its grid so that a Float64 column is among them.
 */
import { spawnSync } from "node:child_process";
import { once } from "node:events";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  adjustedQuerySchema,
  beforeAfterQuerySchema,
  controlChartQuerySchema,
  overviewQuerySchema,
  processWindowQuerySchema,
  rateByVariableQuerySchema,
  screeningQuerySchema,
} from "@shared/api/reports";
import {
  allocate,
  closeDisk,
  eachPiece,
  endBuild,
  ensureCapacity,
  exactColumn,
  FACT_VARIABLES,
  moveToDisk,
  put,
  valuesOf,
  type FactRow,
} from "../../server/services/report-cache-columns";
import {
  chooseOnDisk,
  columnMemoryMb,
  configureColumnMemory,
  configurePieces,
  DEFAULT_COLUMNS_MB,
  failColumnWritesAfter,
  removeStaleColumnFiles,
  withDiskBatch,
} from "../../server/services/report-cache-disk";
import { slabFacts, slabFactsChanged, VARIABLE_SCALE } from "../../server/services/report-cache";
import { readSnapshot, writeSnapshot } from "../../server/services/report-cache-snapshot";
import { adjustedModel } from "../../server/services/reports/adjusted";
import { beforeAfter } from "../../server/services/reports/before-after";
import { controlChart } from "../../server/services/reports/control-chart";
import { overview } from "../../server/services/reports/overview";
import { processWindow } from "../../server/services/reports/process-window";
import { rateByVariable } from "../../server/services/reports/rate-by-variable";
import { screening } from "../../server/services/reports/screening";
import {
  configureScreeningThreads,
  lastScreeningShare,
  screeningThreadSettings,
  startScreeningHelpers,
  stopScreeningHelpers,
} from "../../server/services/reports/screening-threads";
import type { ReportThread } from "../../server/services/report-thread";
import { buildConfoundedPlant } from "../helpers/confounded-plant";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
const threads = screeningThreadSettings();
/** The condition given every digit (a sample mean, as a level-2 system sends): a Float64 column. */
const FULL = "superheat_c";
/** A condition on its grid in this plant (a Float32 column), found once the plant is built. */
let GRID = "";

beforeAll(async () => {
  t = await createTestApp({ beforeStart: (db) => buildConfoundedPlant(db, { heats: 1500 }) });
  t.db.$client.prepare(`update slab_conditions set ${FULL} = ${FULL} + slab_id * 1e-9 where ${FULL} is not null`).run();
  const f = rebuilt(1_000_000);
  GRID = FACT_VARIABLES.find((k) => f.vars[k] instanceof Float32Array && k !== FULL) ?? "";
}, 120_000);
afterAll(async () => {
  configureColumnMemory(null, null);
  configurePieces();
  configureScreeningThreads(threads);
  await stopScreeningHelpers();
  await t?.close();
});

/** The facts rebuilt with `mb` of memory for the condition columns (files beside the database). */
function rebuilt(mb: number) {
  configureColumnMemory(mb, null);
  slabFactsChanged(t.db);
  return slabFacts(t.db);
}

const REPORTS: [string, () => unknown][] = [
  ["overview", () => overview(t.db, overviewQuerySchema.parse({ defectType: "SLG", standardise: "grade_family" }))],
  ["control chart", () => controlChart(t.db, controlChartQuerySchema.parse({ defectType: "SLG" }))],
  ["rate by a grid condition", () => rateByVariable(t.db, rateByVariableQuerySchema.parse({ defectType: "SLG", variable: "casting_speed_m_min" }))],
  ["rate by the full-digit condition", () => rateByVariable(t.db, rateByVariableQuerySchema.parse({ defectType: "SLG", variable: FULL }))],
  ["screening, crude", () => screening(t.db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: "none" }))],
  ["screening, adjusted for the grade family", () => screening(t.db, screeningQuerySchema.parse({ defectType: "SLG" }))],
  ["screening, adjusted for a condition", () => screening(t.db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: `${FULL},strand`, se: "model" }))],
  [
    "process window",
    () => processWindow(t.db, processWindowQuerySchema.parse({ defectType: "SLG", x: "casting_speed_m_min", y: FULL, xBins: 3, yBins: 3, minN: 5 })),
  ],
  [
    "before and after, by a condition",
    () =>
      beforeAfter(
        t.db,
        beforeAfterQuerySchema.parse({
          defectType: "SLG",
          mode: "variable",
          variable: FULL,
          aMin: 10,
          aMax: 25,
          bMin: 25.0001,
          bMax: 60,
          stratifyBy: "grade_family",
        }),
      ),
  ],
  [
    "adjusted model",
    () =>
      adjustedModel(
        t.db,
        adjustedQuerySchema.parse({ defectType: "SLG", variables: `casting_speed_m_min,${FULL},embr_current_a`, adjustFor: "grade_family,strand" }),
      ),
  ],
];

const answers = () => Object.fromEntries(REPORTS.map(([name, run]) => [name, JSON.stringify(run())]));

/** The descriptors this process holds on column files (open, already removed from the directory). */
const openColumnFiles = () =>
  fs
    .readdirSync("/proc/self/fd")
    .map((fd) => {
      try {
        return fs.readlinkSync(`/proc/self/fd/${fd}`);
      } catch {
        return "";
      }
    })
    .filter((target) => target.includes(".strandsight-column."));

describe("condition columns kept in files beyond REPORT_COLUMNS_MB", () => {
  it("when every condition column is in a file, then every report gives the answer it gives with every column in memory, character for character", () => {
    const inMemory = rebuilt(1_000_000);
    expect(Object.keys(inMemory.disk)).toEqual([]);
    expect(inMemory.vars[FULL]).toBeInstanceOf(Float64Array);
    expect(inMemory.vars[GRID]).toBeInstanceOf(Float32Array);
    configureScreeningThreads({ threads: 0 });
    const expected = answers();

    const onDisk = rebuilt(0);
    expect(Object.keys(onDisk.disk).sort()).toEqual([...FACT_VARIABLES].sort());
    expect(Object.keys(onDisk.vars)).toEqual([]);
    expect(onDisk.disk[FULL]!.type).toBe("Float64Array");
    expect(onDisk.disk[GRID]!.type).toBe("Float32Array");
    const got = answers();
    for (const [name] of REPORTS) expect(got[name], name).toBe(expected[name]);
    // Built and read in pieces smaller than the plant (in the server a piece is 262,144 slabs): 1,000
    // and 4,097 (the full-digit column rewritten as Float64 part-way through the build).
    for (const rows of [1000, 4097]) {
      configurePieces(rows);
      const f = rebuilt(0);
      expect(Object.keys(f.disk)).toHaveLength(FACT_VARIABLES.length);
      expect(f.disk[FULL]!.type).toBe("Float64Array");
      const inPieces = answers();
      for (const [name] of REPORTS) expect(inPieces[name], `${name}, pieces of ${rows}`).toBe(expected[name]);
    }
    configurePieces();
    // Some columns in memory and the others in files (1.5 MB: five grid columns with their room for new slabs).
    const mixed = rebuilt(1.5);
    expect(Object.keys(mixed.vars).length).toBeGreaterThan(2);
    expect(Object.keys(mixed.disk).length).toBeGreaterThan(10);
    const mixedAnswers = answers();
    for (const [name] of REPORTS) expect(mixedAnswers[name], `${name}, mixed`).toBe(expected[name]);
    // The reports are real ones: the screening found the speed (confounded by the grade family) and a full-digit superheat.
    expect(expected["screening, crude"]).toContain('"key":"casting_speed_m_min"');
    const rate = JSON.parse(expected["rate by the full-digit condition"]!) as { slabs: number; slabsWithoutValue: number; bins: unknown[] };
    expect(rate.slabs + rate.slabsWithoutValue).toBe(t.db.$client.prepare("select count(*) from slab_conditions").pluck().get());
    expect(rate.slabs).toBeGreaterThan(10_000);
    expect(rate.bins.length).toBeGreaterThan(3);
  });

  it("when a screening's helper thread reads the columns from their files, then the answer is the one thread's with every column in memory", async () => {
    const query = screeningQuerySchema.parse({ defectType: "SLG" });
    rebuilt(1_000_000);
    configureScreeningThreads({ threads: 0 });
    const expected = JSON.stringify(screening(t.db, query));
    rebuilt(0);
    configureScreeningThreads({ threads: 1, sharedFrom: 1 });
    await startScreeningHelpers(1);
    let byHelpers = 0;
    for (let attempt = 0; attempt < 20 && byHelpers === 0; attempt++) {
      expect(JSON.stringify(screening(t.db, query))).toBe(expected);
      const share = lastScreeningShare();
      expect(share).toMatchObject({ threads: 2, failedOver: 0, failures: [] });
      byHelpers = share.byHelpers;
    }
    expect(byHelpers).toBeGreaterThan(0);
    configureScreeningThreads({ threads: 0 });
  });

  it("when a slab's condition changes while its column is in a file, then the next report reads the new value; a value off the grid rewrites the file as Float64", () => {
    const sqlite = t.db.$client;
    const [a, b] = sqlite.prepare(`select slab_id from slab_conditions where ${GRID} is not null order by slab_id limit 2`).pluck().all() as number[];
    const before = rebuilt(0);
    expect(before.disk[GRID]!.type).toBe("Float32Array");
    // On the grid: the file keeps Float32, one value written.
    const scale = VARIABLE_SCALE[GRID]!;
    const old = sqlite.prepare(`select ${GRID} from slab_conditions where slab_id = ?`).pluck().get(a) as number;
    const onGrid = (Math.round(old * scale) + 7) / scale;
    sqlite.prepare(`update slab_conditions set ${GRID} = ? where slab_id = ?`).run(onGrid, a);
    slabFactsChanged(t.db, [a!]);
    let f = slabFacts(t.db);
    expect(f.disk[GRID]!.type).toBe("Float32Array");
    expect(exactColumn(f, GRID)[f.indexOf[a!]!]).toBe(onGrid);
    expect(valuesOf(f, GRID)[f.indexOf[a!]!]).toBe(Math.fround(onGrid));

    // Off the grid: every value comes back as stored, from a Float64 file.
    sqlite.prepare(`update slab_conditions set ${GRID} = 3.14159265358979 where slab_id = ?`).run(b);
    slabFactsChanged(t.db, [b!]);
    f = slabFacts(t.db);
    expect(f.disk[GRID]!.type).toBe("Float64Array");
    const stored = sqlite.prepare(`select slab_id, ${GRID} from slab_conditions order by slab_id`).raw().all() as [number, number | null][];
    const col = valuesOf(f, GRID);
    expect(col).toBeInstanceOf(Float64Array);
    for (const [id, v] of stored) expect(col[f.indexOf[id]!]).toBe(v ?? NaN);
    // The answers are those of the same data all in memory.
    configureScreeningThreads({ threads: 0 });
    const query = screeningQuerySchema.parse({ defectType: "SLG", adjustFor: GRID });
    const fromFiles = JSON.stringify(screening(t.db, query));
    expect(rebuilt(1_000_000).vars[GRID]).toBeInstanceOf(Float64Array);
    expect(fromFiles).toBe(JSON.stringify(screening(t.db, query)));
  });

  it("when one patch changes thousands of slabs apart and then a value off the grid, then every value in the files is SQLite's and the answers are those of memory", () => {
    const sqlite = t.db.$client;
    const f0 = rebuilt(0);
    const grid = FACT_VARIABLES.find((k) => f0.disk[k]!.type === "Float32Array")!;
    const scale = VARIABLE_SCALE[grid]!;
    // Every other slab (thousands of separate runs of rows: the file is rewritten whole), and new
    // values of the full-digit condition on the same slabs.
    const ids = (sqlite.prepare(`select slab_id from slab_conditions where ${grid} is not null order by slab_id`).pluck().all() as number[]).filter(
      (_, k) => k % 2 === 0,
    );
    expect(ids.length).toBeGreaterThan(4000);
    const onGrid = sqlite.prepare(`update slab_conditions set ${grid} = round(${grid} * ${scale} + 3) / ${scale}, ${FULL} = ${FULL} + 1e-7 where slab_id = ?`);
    sqlite.transaction(() => ids.forEach((id) => onGrid.run(id)))();
    // The last one off the grid: the file is rewritten as Float64 while the others' writes are held.
    sqlite.prepare(`update slab_conditions set ${grid} = 1.23456789012 where slab_id = ?`).run(ids[ids.length - 1]);
    slabFactsChanged(t.db, ids);
    const f = slabFacts(t.db);
    expect(f).toBe(f0);
    expect(f.disk[grid]!.type).toBe("Float64Array");
    for (const key of [grid, FULL]) {
      const stored = sqlite.prepare(`select slab_id, ${key} from slab_conditions order by slab_id`).raw().all() as [number, number | null][];
      const col = valuesOf(f, key);
      for (const [id, v] of stored) expect(col[f.indexOf[id]!], `${key} of slab ${id}`).toBe(v ?? NaN);
    }
    configureScreeningThreads({ threads: 0 });
    const query = screeningQuerySchema.parse({ defectType: "SLG", adjustFor: grid });
    const fromFiles = JSON.stringify(screening(t.db, query));
    rebuilt(1_000_000);
    expect(fromFiles).toBe(JSON.stringify(screening(t.db, query)));
  });

  it("when the facts are replaced, then the old column files are closed, and none is ever left in the database's directory", () => {
    const dir = path.dirname(t.db.$client.name);
    rebuilt(0);
    const open = openColumnFiles();
    expect(open).toHaveLength(FACT_VARIABLES.length);
    // Removed from the directory when made: only the open descriptor reaches each one.
    for (const target of open) expect(target).toMatch(/\(deleted\)$/);
    expect(fs.readdirSync(dir).filter((n) => n.includes(".strandsight-column."))).toEqual([]);
    rebuilt(0);
    rebuilt(0);
    expect(openColumnFiles()).toHaveLength(FACT_VARIABLES.length);
    rebuilt(1_000_000);
    expect(openColumnFiles()).toEqual([]);
  });

  it("when a column file cannot be written during a patch, then the slab data are read again and the next report has SQLite's values, not half a patch", () => {
    const sqlite = t.db.$client;
    const f0 = rebuilt(0);
    const id = sqlite.prepare(`select slab_id from slab_conditions where ${FULL} is not null order by slab_id desc limit 1`).pluck().get() as number;
    sqlite.prepare(`update slab_conditions set ${FULL} = 99.123456789, ${GRID} = null where slab_id = ?`).run(id);
    slabFactsChanged(t.db, [id]);
    // The writes to one column's file fail (as on a failing disk): its descriptor is swapped for one that is not open.
    const real = f0.disk[GRID]!.fd;
    f0.disk[GRID]!.fd = 1_000_000;
    const f = slabFacts(t.db);
    fs.closeSync(real);
    expect(f).not.toBe(f0);
    expect(exactColumn(f, FULL)[f.indexOf[id]!]).toBe(99.123456789);
    expect(exactColumn(f, GRID)[f.indexOf[id]!]).toBeNaN();
    // The old facts' files are closed with them (the one that failed is no error).
    expect(openColumnFiles()).toHaveLength(FACT_VARIABLES.length);
  });

  it("when the folder for the column files cannot be used, then the columns stay in memory, rebuilt or from a snapshot, with the same answers", async () => {
    const sqlite = t.db.$client;
    configureScreeningThreads({ threads: 0 });
    rebuilt(1_000_000);
    const expected = answers();
    const missing = path.join(os.tmpdir(), `strandsight-no-such-folder-${process.pid}`, "columns");
    configureColumnMemory(0, missing);
    slabFactsChanged(t.db);
    const f = slabFacts(t.db);
    expect(Object.keys(f.disk)).toEqual([]);
    expect(Object.keys(f.vars)).toHaveLength(FACT_VARIABLES.length);
    expect(openColumnFiles()).toEqual([]);
    const got = answers();
    for (const [name] of REPORTS) expect(got[name], name).toBe(expected[name]);
    // A snapshot read into that folder is refused with the reason, so the cache is rebuilt (in memory).
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-disk-")), "plant.db.report-cache");
    await writeSnapshot(sqlite, f, file);
    const back = await readSnapshot(sqlite, file, { capacityFor: (n) => n + 10, diskDir: missing });
    expect(back).toMatchObject({ facts: null, reason: `its columns cannot be written to files in ${missing} (ENOENT)` });
    expect(openColumnFiles()).toEqual([]);
    fs.rmSync(path.dirname(file), { recursive: true, force: true });
  });

  it("when a build's column files cannot be written (a full disk), then the build is made again with every column in memory, with the same answers", () => {
    configureScreeningThreads({ threads: 0 });
    rebuilt(1_000_000);
    const expected = answers();
    configureColumnMemory(0, null);
    // The fourth write to a column file fails: a piece part-way through the build.
    failColumnWritesAfter(3);
    try {
      slabFactsChanged(t.db);
      const f = slabFacts(t.db);
      expect(Object.keys(f.disk)).toEqual([]);
      expect(Object.keys(f.vars)).toHaveLength(FACT_VARIABLES.length);
    } finally {
      failColumnWritesAfter(null);
    }
    expect(openColumnFiles()).toEqual([]);
    const got = answers();
    for (const [name] of REPORTS) expect(got[name], name).toBe(expected[name]);
  });

  it("when a snapshot is written from columns in files, then it reads back to the same bytes, into memory or into files", async () => {
    const sqlite = t.db.$client;
    const inMemory = rebuilt(1_000_000);
    const bytesOf = (f: typeof inMemory, k: string) => {
      const c = valuesOf(f, k);
      return Buffer.from(c.buffer, c.byteOffset, f.size * c.BYTES_PER_ELEMENT).toString("base64");
    };
    const expected = Object.fromEntries(FACT_VARIABLES.map((k) => [k, bytesOf(inMemory, k)]));
    const onDisk = rebuilt(0);
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-disk-")), "plant.db.report-cache");
    await writeSnapshot(sqlite, onDisk, file);
    configureColumnMemory(1_000_000);
    const back = await readSnapshot(sqlite, file, { capacityFor: (n) => n + 10, diskDir: path.dirname(file) });
    expect(back.facts).not.toBeNull();
    expect(Object.keys(back.facts!.disk)).toEqual([]);
    for (const k of FACT_VARIABLES) expect(bytesOf(back.facts!, k), k).toBe(expected[k]);
    configureColumnMemory(0);
    const backOnDisk = await readSnapshot(sqlite, file, { capacityFor: (n) => n + 10, diskDir: path.dirname(file) });
    expect(Object.keys(backOnDisk.facts!.disk)).toHaveLength(FACT_VARIABLES.length);
    for (const k of FACT_VARIABLES) expect(bytesOf(backOnDisk.facts!, k), k).toBe(expected[k]);
    closeDisk(backOnDisk.facts);
    expect(fs.readdirSync(path.dirname(file))).toEqual(["plant.db.report-cache"]);
    fs.rmSync(path.dirname(file), { recursive: true, force: true });
  });
});

describe("which condition columns stay in memory", () => {
  const types = Object.fromEntries(FACT_VARIABLES.map((k, i) => [k, i % 2 === 0 ? "Float64Array" : "Float32Array"])) as Record<
    string,
    "Float32Array" | "Float64Array"
  >;
  const grid = FACT_VARIABLES.filter((_, i) => i % 2 === 1);
  const full = FACT_VARIABLES.filter((_, i) => i % 2 === 0);

  it("when the budget holds every column, then none goes to a file; for a database in memory, never", () => {
    configureColumnMemory(256);
    expect(columnMemoryMb()).toBe(256);
    // 256 MB set: a million slabs keep every column (126 MB); five million keep the grid ones (210 MB)
    // and the first full-digit one (38 MB).
    expect(chooseOnDisk(1_000_000, types, "/var/lib/plant")).toEqual([]);
    expect(chooseOnDisk(5_000_000, types, "/var/lib/plant")).toEqual(full.slice(1));
    expect(chooseOnDisk(1_000_000, types, "/var/lib/plant", 1000)).toEqual([]);
    expect(chooseOnDisk(1_000_000, types, null, 0)).toEqual([]);
  });

  it("when REPORT_COLUMNS_MB is unset, then every column stays in memory while they all fit in 256 MB, and every column goes to a file once they do not", () => {
    configureColumnMemory(null);
    expect(columnMemoryMb()).toBe(null);
    expect(DEFAULT_COLUMNS_MB).toBe(256);
    // 11 grid columns of 4 bytes and 11 full ones of 8: 132 bytes a slab (126 MB at a million).
    expect(chooseOnDisk(1_000_000, types, "/var/lib/plant")).toEqual([]);
    // 256 MB exactly: 2,033,601 slabs still fit; one slab more and none stays.
    const fits = Math.floor((256 * 1048576) / 132);
    expect(fits).toBe(2_033_601);
    expect(chooseOnDisk(fits, types, "/var/lib/plant")).toEqual([]);
    expect(chooseOnDisk(fits + 1, types, "/var/lib/plant")).toEqual([...grid, ...full]);
    expect(chooseOnDisk(5_000_000, types, "/var/lib/plant")).toEqual([...grid, ...full]);
    // A database in memory: never.
    expect(chooseOnDisk(5_000_000, types, null)).toEqual([]);
    // Set to a number: filled as before, whatever the default does.
    expect(chooseOnDisk(5_000_000, types, "/var/lib/plant", 256)).toEqual(full.slice(1));
  });

  it("when the budget is short, then the columns on their grid (half the bytes) stay first, each kind in the variables' order", () => {
    // 1 MB a Float32 column, 2 MB a Float64 one: 12 MB holds the 11 grid columns (11 MB) and no full one.
    const rows = 262_144;
    expect(chooseOnDisk(rows, types, "/d", 12)).toEqual(full);
    // 14 MB: the grid columns and the first full one.
    expect(chooseOnDisk(rows, types, "/d", 14)).toEqual(full.slice(1));
    // 5 MB: the first five grid columns only.
    expect(chooseOnDisk(rows, types, "/d", 5)).toEqual([...grid.slice(5), ...full]);
  });

  it("when a build appending to a file meets a value off the grid after pieces have gone out, then the file is rewritten as Float64 and the build goes on appending", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-disk-"));
    configurePieces(2);
    try {
      const k = FACT_VARIABLES[0]!;
      const f = allocate(8, 10, { dir, keys: [k] });
      expect(f.disk[k]!.type).toBe("Float32Array");
      const row = (id: number, v: number | null): FactRow => [id, 1_700_000_000_000, 1, 1, 1, 1, 0, 1, 25, id, ...FACT_VARIABLES.map(() => v)];
      const values = [1.5, 2.25, null, 3.5, 4.75, 0.1 + 0.2, 6.5, 7.25];
      values.forEach((v, id) => put(f, f.size++, row(id + 1, v)));
      endBuild(f);
      expect(f.disk[k]!.type).toBe("Float64Array");
      expect(f.disk[k]!.tail).toBeUndefined();
      expect([...exactColumn(f, k)]).toEqual(values.map((v) => v ?? NaN));
      closeDisk(f);
    } finally {
      configurePieces();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it("when a process that ended left a column file behind, then the next start removes it, and leaves a running process's alone", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-disk-"));
    const gone = spawnSync("true").pid;
    const names = [`.strandsight-column.${gone}.1.abc`, `.strandsight-column.${process.ppid}.1.abc`, `.strandsight-column.${process.pid}.7.abc`, "app.db"];
    for (const n of names) fs.writeFileSync(path.join(dir, n), "x");
    removeStaleColumnFiles(dir);
    expect(fs.readdirSync(dir).sort()).toEqual(names.slice(1).sort());
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it("when a new slab's row is written to columns in files, then it reads back as it was written, past the file's end too", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-disk-"));
    const f = allocate(4, 10);
    const row = (id: number, v: number | null): FactRow => [id, 1_700_000_000_000, 1, 1, 1, 1, 0, 1, 25, id, ...FACT_VARIABLES.map(() => v)];
    put(f, f.size++, row(1, 1.5));
    put(f, f.size++, row(2, null));
    moveToDisk(f, dir, [...FACT_VARIABLES]);
    expect(Object.keys(f.vars)).toEqual([]);
    put(f, f.size++, row(3, 2.25));
    // Off the grid in a Float32 file: rewritten as Float64, the earlier rows decoded exactly.
    put(f, f.size++, row(4, 0.1 + 0.2));
    const k = FACT_VARIABLES[0]!;
    expect(f.disk[k]!.type).toBe("Float64Array");
    expect([...exactColumn(f, k)]).toEqual([1.5, NaN, 2.25, 0.1 + 0.2]);
    // In a patch (writes held back, then runs of rows): two new slabs past the file's end, a row written twice.
    withDiskBatch(
      () => f.size,
      () => {
        ensureCapacity(f, 6);
        put(f, f.size++, row(5, 4.5));
        put(f, f.size++, row(6, 5.75));
        put(f, 0, row(1, 1.25));
        put(f, 0, row(1, 1.75));
      },
    );
    expect([...exactColumn(f, k)]).toEqual([1.75, NaN, 2.25, 0.1 + 0.2, 4.5, 5.75]);
    const pieces: number[][] = [];
    configurePieces(4);
    eachPiece(f, k, (col, from, to) => pieces.push([from, to, ...col]));
    configurePieces();
    expect(pieces).toEqual([
      [0, 4, 1.75, NaN, 2.25, 0.1 + 0.2],
      [4, 6, 4.5, 5.75],
    ]);
    expect(fs.readdirSync(dir)).toEqual([]);
    fs.rmSync(dir, { recursive: true, force: true });
  });
});

describe("the report thread's column files", () => {
  it("when the report thread dies with its columns in files, then its files are closed, and the new thread's reports give the same answer", async () => {
    const app = await createTestApp({ scale: 0.05, env: { REPORT_COLUMNS_MB: "0" } });
    let closed = false;
    try {
      const thread = app.app.locals.reports as ReportThread;
      const quality = await app.agentFor("quality");
      const report = "/api/reports/rate-by-variable?variable=superheat_c&defectType=SLG";
      // Besides any this file's own facts hold.
      const before = openColumnFiles().length;
      const threadFiles = () => openColumnFiles().length - before;
      const first = await quality.get(report);
      expect(first.status).toBe(200);
      expect(threadFiles()).toBe(FACT_VARIABLES.length);
      const restarted = once(thread.events, "restarted");
      await thread.kill();
      await restarted;
      // Closed with the thread (Node closes the descriptors a thread opened when it ends).
      expect(threadFiles()).toBe(0);
      const again = await quality.get(report);
      expect(again.status).toBe(200);
      expect(JSON.stringify(again.body)).toBe(JSON.stringify(first.body));
      expect(threadFiles()).toBe(FACT_VARIABLES.length);
      await app.close();
      closed = true;
      expect(threadFiles()).toBe(0);
    } finally {
      if (!closed) await app.close();
    }
  }, 60_000);
});
