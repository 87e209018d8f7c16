/**
 * One measurement of the import benchmark, run in its own process by import.bench.ts:
 * `load` / `stream` time exceljs reading heats.xlsx and slabs.xlsx; `import` times the real import of
 * both into a fresh database. Prints one JSON line: seconds per file, peak RSS, phases.
 * `prepare` writes the database every import starts from (migrated, reference data seeded), once
 * per bench run: the demo-data modules seeding needs (about 80 MB of RSS under tsx) are then not in
 * the measured processes, which load what an import thread loads (import-worker.ts), exceljs's also exceljs.
 */
import fs from "node:fs";
import path from "node:path";
import { Readable } from "node:stream";
import type ExcelJS from "exceljs";

const [task, dir] = process.argv.slice(2) as [string, string];
let peak = 0;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 10);

let excel: typeof ExcelJS;

async function load(buffer: Buffer) {
  const wb = new excel.Workbook();
  await wb.xlsx.load(buffer as never);
  let cells = 0;
  wb.worksheets[0]!.eachRow((row) => (cells += (row.values as unknown[]).length));
  return cells;
}

async function stream(buffer: Buffer) {
  const reader = new excel.stream.xlsx.WorkbookReader(Readable.from(buffer), {
    sharedStrings: "cache",
    hyperlinks: "ignore",
    worksheets: "emit",
    styles: "cache",
    entries: "ignore",
  });
  let cells = 0;
  for await (const sheet of reader) for await (const row of sheet) cells += (row as unknown as { values: unknown[] }).values.length;
  return cells;
}

async function prepare() {
  const { openDatabase } = await import("../../server/db/client");
  const { runMigrations } = await import("../../server/db/migrate");
  const { seedReference } = await import("../../server/seed/seed");
  const db = openDatabase(path.join(dir, "template.db"));
  runMigrations(db);
  seedReference(db);
  db.$client.close();
}

async function main() {
  if (task === "prepare") {
    await prepare();
    clearInterval(sampler);
    return;
  }
  const out: Record<string, unknown> = {};
  const phases: Record<string, Record<string, number>> = {};
  const rows: Record<string, number> = {};
  // Every task loads what an import thread loads (import-worker.ts: the reader, the import service,
  // its connection); exceljs's tasks load exceljs too (an import thread never does).
  if (task !== "import") excel = (await import("exceljs")).default;
  const mods = {
    ...(await import("../../server/import/import-worker")),
    ...(await import("../../server/import/read-table")),
    ...(await import("../../server/services/import.service")),
  };
  let db: import("../../server/db/client").Db | null = null;
  if (task === "import") {
    const file = path.join(dir, `run-${process.pid}.db`);
    fs.copyFileSync(path.join(dir, "template.db"), file);
    db = mods.openImportDatabase(file);
  }
  // The process before any file is read: Node, the tsx loader, the modules, an open database.
  const baseMb = process.memoryUsage().rss / 1024 / 1024;
  for (const file of ["heats", "slabs"] as const) {
    // exceljs reads from a buffer, read before the clock starts; the import reads the file itself.
    const buffer = task === "import" ? null : fs.readFileSync(path.join(dir, `${file}.xlsx`));
    const t0 = performance.now();
    if (task === "load") await load(buffer!);
    else if (task === "stream") await stream(buffer!);
    else {
      const p: Record<string, number> = {};
      const table = await mods.readTable(path.join(dir, `${file}.xlsx`));
      p["read file"] = (performance.now() - t0) / 1000;
      const result = mods.runImport(db!, { kind: file, table, dryRun: false, fileName: file, sha256: null, source: "upload", by: { actor: "bench" } }, p);
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
  console.log(JSON.stringify({ ...out, rssMb, baseMb, phases, rows }));
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
