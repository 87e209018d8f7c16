/**
 * `npm run bench:import` — imports 10,000 heats and 100,000 slabs from .xlsx into a fresh database and
 * compares each whole import (read, check, plan, write, resolve conditions, in one transaction) with
 * the time exceljs alone needs to read the same file, measured in the same run two ways:
 *   - exceljs's standard whole-workbook read, `workbook.xlsx.load(buffer)` plus a pass over the rows;
 *   - its streaming reader with the options the import itself uses — the fastest exceljs read.
 * Target: the whole import within 1.5× the exceljs read. Prints both ratios, the phases, rows per
 * second and the process's peak memory. A benchmark, not a test: nothing asserts time.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import ExcelJS from "exceljs";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { readTable } from "../../server/import/read-table";
import { runImport } from "../../server/services/import.service";
import { seedReference } from "../../server/seed/seed";

const HEATS = Number(process.env.BENCH_HEATS ?? 10_000);
const SLABS_PER_HEAT = Number(process.env.BENCH_SLABS_PER_HEAT ?? 10);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-import-"));
const peak = { rss: 0 };
const sampler = setInterval(() => {
  peak.rss = Math.max(peak.rss, process.memoryUsage().rss);
}, 20);

const HEAT_COLS = ["heat_no", "sequence_no", "caster", "grade", "cast_start", "cast_end", "ladle_weight_t", "casting_speed_m_min", "tundish_temp_c", "embr_current_a", "sen_depth_mm", "argon_nl_min", "mold_level_sd_mm", "c_pct", "si_pct", "mn_pct", "p_pct", "s_pct", "al_pct", "n_ppm"];
const SLAB_COLS = ["slab_id", "heat_no", "strand", "piece_no", "length_mm", "width_mm", "thickness_mm", "cast_length_start_m", "transition"];
const GRADES = ["LV-DQ10", "LV-CQ12", "LV-ST32", "LV-ST36", "LV-HS50", "LV-IF01"];

async function writeWorkbook(file: string, header: string[], rows: (i: number) => unknown[], count: number) {
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ filename: file, useStyles: true, useSharedStrings: false });
  const ws = wb.addWorksheet("Data");
  ws.addRow(header).commit();
  for (let i = 0; i < count; i++) ws.addRow(rows(i)).commit();
  ws.commit();
  await wb.commit();
}

async function exceljsRead(buffer: Buffer) {
  const reader = new ExcelJS.stream.xlsx.WorkbookReader(Readable.from(buffer), {
    sharedStrings: "cache", hyperlinks: "ignore", worksheets: "emit", styles: "cache", entries: "ignore",
  });
  let cells = 0;
  for await (const sheet of reader) for await (const row of sheet) cells += (row as unknown as { values: unknown[] }).values.length;
  return cells;
}

async function exceljsLoad(buffer: Buffer) {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buffer as never);
  let cells = 0;
  wb.worksheets[0]!.eachRow((row) => {
    cells += (row.values as unknown[]).length;
  });
  return cells;
}

async function time<T>(fn: () => Promise<T> | T): Promise<[T, number]> {
  const t0 = performance.now();
  const r = await fn();
  return [r, (performance.now() - t0) / 1000];
}

const T0 = Date.UTC(2026, 0, 1);
const heatNo = (i: number) => `B${String(i).padStart(6, "0")}`;

async function main() {
  console.log(`Strandsight import benchmark: ${HEATS.toLocaleString("en")} heats, ${(HEATS * SLABS_PER_HEAT).toLocaleString("en")} slabs (Node ${process.version})`);
  const heatsFile = path.join(dir, "heats.xlsx");
  const slabsFile = path.join(dir, "slabs.xlsx");
  await writeWorkbook(heatsFile, HEAT_COLS, (i) => [
    heatNo(i), `BS-${Math.floor(i / 8)}`, "CC2", GRADES[i % GRADES.length], new Date(T0 + i * 35 * 60_000), new Date(T0 + i * 35 * 60_000 + 30 * 60_000),
    215, 1.3 + (i % 7) * 0.05, 1540 + (i % 11), (i % 5) * 100, 150 + (i % 4) * 10, 6 + (i % 5), 2 + (i % 9) * 0.2,
    0.05 + (i % 10) * 0.01, 0.2, 0.9, 0.015, 0.008, 0.03, 50,
  ], HEATS);
  await writeWorkbook(slabsFile, SLAB_COLS, (i) => {
    const h = Math.floor(i / SLABS_PER_HEAT);
    const k = i % SLABS_PER_HEAT;
    const strand = k < SLABS_PER_HEAT / 2 ? 1 : 2;
    const piece = (k % (SLABS_PER_HEAT / 2)) + 1;
    return [`${heatNo(h)}-${strand}${String(piece).padStart(2, "0")}`, heatNo(h), strand, piece, 10_000, 1500, 230, (h % 8) * 45 + (piece - 1) * 10, piece === 1 && h % 8 !== 0];
  }, HEATS * SLABS_PER_HEAT);

  const db = openDatabase(path.join(dir, "bench.db"));
  runMigrations(db);
  seedReference(db);

  const results: { name: string; rows: number; load: number; read: number; total: number; mb: number; phases: Record<string, number> }[] = [];
  for (const [name, file, kind] of [["heats", heatsFile, "heats"], ["slabs", slabsFile, "slabs"]] as const) {
    const buffer = fs.readFileSync(file);
    // Baselines: exceljs alone reading the file, best of two each.
    const load = Math.min((await time(() => exceljsLoad(buffer)))[1], (await time(() => exceljsLoad(buffer)))[1]);
    const read = Math.min((await time(() => exceljsRead(buffer)))[1], (await time(() => exceljsRead(buffer)))[1]);
    const phases: Record<string, number> = {};
    const [result, total] = await time(async () => {
      const t0 = performance.now();
      const table = await readTable(buffer);
      phases["read file"] = (performance.now() - t0) / 1000;
      return runImport(db, { kind, table, dryRun: false, fileName: name, sha256: null, source: "upload", by: { actor: "bench" } }, phases);
    });
    if (!result.valid) throw new Error(`bench import of ${name} failed: ${JSON.stringify(result.errors.slice(0, 3))}`);
    results.push({ name, rows: result.rows, load, read, total, mb: buffer.length / 1e6, phases });
  }
  clearInterval(sampler);
  const rss = Math.max(peak.rss, process.resourceUsage().maxRSS * 1024);
  const f = (x: number) => `${x.toFixed(2)} s`.padStart(9);
  console.log("");
  console.log("file      rows     size   exceljs load  exceljs stream   import   rows/s   import/load  import/stream  (target ≤ 1.50×)");
  const sum = { rows: 0, load: 0, read: 0, total: 0 };
  for (const r of results) {
    sum.rows += r.rows;
    sum.load += r.load;
    sum.read += r.read;
    sum.total += r.total;
    console.log(
      `${r.name.padEnd(8)} ${String(r.rows).padStart(7)} ${r.mb.toFixed(1).padStart(5)} MB ${f(r.load)}      ${f(r.read)}  ${f(r.total)} ${Math.round(r.rows / r.total).toLocaleString("en").padStart(8)}      ${(r.total / r.load).toFixed(2)}×         ${(r.total / r.read).toFixed(2)}×`,
    );
  }
  const vsLoad = sum.total / sum.load;
  const vsRead = sum.total / sum.read;
  console.log(
    `all      ${String(sum.rows).padStart(7)}          ${f(sum.load)}      ${f(sum.read)}  ${f(sum.total)} ${Math.round(sum.rows / sum.total).toLocaleString("en").padStart(8)}      ${vsLoad.toFixed(2)}× ${vsLoad <= 1.5 ? "met" : "NOT met"}     ${vsRead.toFixed(2)}× ${vsRead <= 1.5 ? "met" : "NOT met"}`,
  );
  for (const r of results) {
    console.log(`  ${r.name} phases: ${Object.entries(r.phases).map(([k, v]) => `${k} ${v.toFixed(2)} s`).join(", ")}`);
  }
  console.log(`peak memory (RSS): ${(rss / 1024 / 1024).toFixed(0)} MB`);
  db.$client.close();
  fs.rmSync(dir, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
