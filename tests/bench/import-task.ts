/**
 * One measurement of the import benchmark, run in its own process by import.bench.ts:
 * `load` / `stream` time exceljs reading heats.xlsx and slabs.xlsx; `import` times the real import of
 * both into a fresh database. Prints one JSON line: seconds per file, peak RSS, phases.
 */
import fs from "node:fs";
import path from "node:path";
import { Readable } from "node:stream";
import ExcelJS from "exceljs";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { readTable } from "../../server/import/read-table";
import { runImport } from "../../server/services/import.service";
import { seedReference } from "../../server/seed/seed";

const [task, dir] = process.argv.slice(2) as [string, string];
let peak = 0;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 10);

async function load(buffer: Buffer) {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buffer as never);
  let cells = 0;
  wb.worksheets[0]!.eachRow((row) => (cells += (row.values as unknown[]).length));
  return cells;
}

async function stream(buffer: Buffer) {
  const reader = new ExcelJS.stream.xlsx.WorkbookReader(Readable.from(buffer), {
    sharedStrings: "cache", hyperlinks: "ignore", worksheets: "emit", styles: "cache", entries: "ignore",
  });
  let cells = 0;
  for await (const sheet of reader) for await (const row of sheet) cells += (row as unknown as { values: unknown[] }).values.length;
  return cells;
}

async function main() {
  const out: Record<string, unknown> = {};
  const phases: Record<string, Record<string, number>> = {};
  const rows: Record<string, number> = {};
  const db = task === "import" ? openDatabase(path.join(dir, `run-${process.pid}.db`)) : null;
  if (db) {
    runMigrations(db);
    seedReference(db);
  }
  for (const file of ["heats", "slabs"] as const) {
    const buffer = fs.readFileSync(path.join(dir, `${file}.xlsx`));
    const t0 = performance.now();
    if (task === "load") await load(buffer);
    else if (task === "stream") await stream(buffer);
    else {
      const p: Record<string, number> = {};
      const table = await readTable(path.join(dir, `${file}.xlsx`));
      p["read file"] = (performance.now() - t0) / 1000;
      const result = runImport(db!, { kind: file, table, dryRun: false, fileName: file, sha256: null, source: "upload", by: { actor: "bench" } }, p);
      if (!result.valid) throw new Error(`${file}: ${JSON.stringify(result.errors.slice(0, 3))}`);
      phases[file] = p;
      rows[file] = result.rows;
    }
    out[file] = (performance.now() - t0) / 1000;
  }
  clearInterval(sampler);
  db?.$client.close();
  if (db) for (const f of fs.readdirSync(dir)) if (f.startsWith(`run-${process.pid}.db`)) fs.rmSync(path.join(dir, f));
  const rssMb = Math.max(peak, process.resourceUsage().maxRSS * 1024) / 1024 / 1024;
  console.log(JSON.stringify({ ...out, rssMb, phases, rows }));
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
