/**
 * `npm run bench:import` — imports 10,000 heats and 100,000 slabs from .xlsx into a fresh database and
 * compares each whole import (read, check, plan, write, resolve conditions, in one transaction) with
 * the time exceljs alone needs to read the same file, measured in the same run two ways:
 *   - exceljs's standard whole-workbook read, `workbook.xlsx.load(buffer)` plus a pass over the rows;
 *   - its streaming reader with the options the import itself uses — the fastest exceljs read.
 * Every measurement runs in a fresh child process (no heap left over from another) with the same
 * modules loaded and the import thread's heap cap, three times; the medians are shown, and each
 * run's import / streaming-read ratio. Peak memory is the import process's whole RSS (its threads
 * included), with the part it holds before reading shown beside it.
 * Targets: the whole import within 1.5× the exceljs read, its peak RSS at most 250 MB.
 * A benchmark, not a test: nothing asserts time.
 *
 * The exceljs reads are measured by import-task.ts, as before. The import is measured here (the
 * `import` task below) as the server's import thread runs it: runImportTask (import-worker.ts), from
 * the file on disk — its kind judged by file-type, read, checked, planned, written, its SHA-256
 * taken — after the thread's warm-up, as the server warms its import thread when it starts (file-type
 * loaded, the reader thread's code made ready). Since issue 14 a large workbook of heats or slabs is
 * read in a thread of its own while the import thread checks and writes the pages already read
 * (sheet-reader.ts, import.service.ts runImportStreamed), so the phases shown are the import thread's:
 * busy (checking, planning, writing), waiting for pages, and the write lock held, from the first page
 * to the commit. Before, the import was measured as readTable then runImport, one after the other,
 * with file-type loaded inside the first file's time.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import ExcelJS from "exceljs";
import { ALLOCATOR_ENV } from "../../server/lib/allocator";
import { IMPORT_LIMITS } from "@shared/api/imports";
import { IMPORT_THREAD_HEAP_MB } from "../../server/import/import-pool";

const HEATS = Number(process.env.BENCH_HEATS ?? 10_000);
const SLABS_PER_HEAT = Number(process.env.BENCH_SLABS_PER_HEAT ?? 10);
const RUNS = Number(process.env.BENCH_RUNS ?? 3);
const here = path.dirname(fileURLToPath(import.meta.url));

const HEAT_COLS = [
  "heat_no",
  "sequence_no",
  "caster",
  "grade",
  "cast_start",
  "cast_end",
  "ladle_weight_t",
  "casting_speed_m_min",
  "tundish_temp_c",
  "embr_current_a",
  "sen_depth_mm",
  "argon_nl_min",
  "mold_level_sd_mm",
  "c_pct",
  "si_pct",
  "mn_pct",
  "p_pct",
  "s_pct",
  "al_pct",
  "n_ppm",
];
const SLAB_COLS = ["slab_id", "heat_no", "strand", "piece_no", "length_mm", "width_mm", "thickness_mm", "cast_length_start_m", "transition"];
const GRADES = ["LV-DQ10", "LV-CQ12", "LV-ST32", "LV-ST36", "LV-HS50", "LV-IF01"];
const T0 = Date.UTC(2026, 0, 1);
const heatNo = (i: number) => `B${String(i).padStart(6, "0")}`;

async function writeWorkbook(file: string, header: string[], rows: (i: number) => unknown[], count: number) {
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ filename: file, useStyles: true, useSharedStrings: false });
  const ws = wb.addWorksheet("Data");
  ws.addRow(header).commit();
  for (let i = 0; i < count; i++) ws.addRow(rows(i)).commit();
  ws.commit();
  await wb.commit();
}

interface TaskResult {
  heats: number;
  slabs: number;
  rssMb: number;
  /** RSS before the first file is read (Node, the tsx loader, the modules, the open database). */
  baseMb: number;
  phases?: Record<string, Record<string, number>>;
  rows?: Record<string, number>;
}

const ALLOCATOR = process.env.BENCH_ALLOCATOR !== "glibc";

function runTask(task: string, dir: string): TaskResult | null {
  // As an import runs in the server: under the import thread's heap cap (import-pool.ts), which also
  // sets how far V8 lets the heap grow between full collections; exceljs under the same cap.
  const heap = task === "prepare" ? [] : [`--max-old-space-size=${IMPORT_THREAD_HEAP_MB}`];
  const script = task === "import" ? fileURLToPath(import.meta.url) : path.join(here, "import-task.ts");
  const out = execFileSync(process.execPath, [...heap, "--import", "tsx", script, task, dir], {
    encoding: "utf8",
    stdio: ["ignore", "pipe", "inherit"],
    // With the C allocator's setting npm start's supervisor gives the server (server/lib/allocator.ts),
    // for the exceljs reads too (BENCH_ALLOCATOR=glibc: without). Measured side by side, twice: the
    // import's peak 251–259 MB without it, 233–240 MB with it; the times and ratios the same.
    env: { ...process.env, LOG_LEVEL: "silent", ...(ALLOCATOR ? ALLOCATOR_ENV : {}) },
  });
  const last = out.trim().split("\n").pop();
  return last ? (JSON.parse(last) as TaskResult) : null;
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

/**
 * The `import` task, in its own process: both files imported into a copy of the prepared database as
 * the server's import thread imports them. Prints one JSON line, as import-task.ts does for the others.
 */
async function importTask(dir: string) {
  let peak = 0;
  const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 10);
  // What an import thread loads (import-task.ts loads the same in the exceljs tasks).
  const { runImportTask } = await import("../../server/import/import-worker");
  await import("../../server/import/read-table");
  await import("../../server/services/import.service");
  const databaseFile = path.join(dir, `run-${process.pid}.db`);
  fs.copyFileSync(path.join(dir, "template.db"), databaseFile);
  await runImportTask({ warm: true });
  // The process before any file is read: Node, the tsx loader, the modules, the warmed thread's parts.
  const baseMb = process.memoryUsage().rss / 1024 / 1024;
  const out: Record<string, number> = {};
  const phases: Record<string, Record<string, number>> = {};
  const rows: Record<string, number> = {};
  for (const file of ["heats", "slabs"] as const) {
    const t0 = performance.now();
    const outcome = await runImportTask({
      databaseFile,
      kind: file,
      dryRun: false,
      source: "upload",
      file: path.join(dir, `${file}.xlsx`),
      fileName: `${file}.xlsx`,
      by: { actor: "bench" },
      limits: IMPORT_LIMITS,
      heapMb: IMPORT_THREAD_HEAP_MB,
      measure: true,
    });
    out[file] = (performance.now() - t0) / 1000;
    if (!outcome?.ok || !outcome.result.valid) throw new Error(`${file}: ${JSON.stringify(outcome).slice(0, 600)}`);
    phases[file] = outcome.timings ?? {};
    rows[file] = outcome.result.rows;
  }
  clearInterval(sampler);
  for (const f of fs.readdirSync(dir)) if (f.startsWith(`run-${process.pid}.db`)) fs.rmSync(path.join(dir, f));
  const rssMb = Math.max(peak, process.resourceUsage().maxRSS * 1024) / 1024 / 1024;
  console.log(JSON.stringify({ ...out, rssMb, baseMb, phases, rows }));
}

async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-import-"));
  console.log(
    `Strandsight import benchmark: ${HEATS.toLocaleString("en")} heats, ${(HEATS * SLABS_PER_HEAT).toLocaleString("en")} slabs, ${RUNS} runs each, medians (Node ${process.version}, ${os.cpus().length} cores); allocator: ${ALLOCATOR ? "as npm start sets it" : "glibc's moving threshold"}`,
  );
  await writeWorkbook(
    path.join(dir, "heats.xlsx"),
    HEAT_COLS,
    (i) => [
      heatNo(i),
      `BS-${Math.floor(i / 8)}`,
      "CC2",
      GRADES[i % GRADES.length],
      new Date(T0 + i * 35 * 60_000),
      new Date(T0 + i * 35 * 60_000 + 30 * 60_000),
      215,
      1.3 + (i % 7) * 0.05,
      1540 + (i % 11),
      (i % 5) * 100,
      150 + (i % 4) * 10,
      6 + (i % 5),
      2 + (i % 9) * 0.2,
      0.05 + (i % 10) * 0.01,
      0.2,
      0.9,
      0.015,
      0.008,
      0.03,
      50,
    ],
    HEATS,
  );
  await writeWorkbook(
    path.join(dir, "slabs.xlsx"),
    SLAB_COLS,
    (i) => {
      const h = Math.floor(i / SLABS_PER_HEAT);
      const k = i % SLABS_PER_HEAT;
      const strand = k < SLABS_PER_HEAT / 2 ? 1 : 2;
      const piece = (k % (SLABS_PER_HEAT / 2)) + 1;
      return [
        `${heatNo(h)}-${strand}${String(piece).padStart(2, "0")}`,
        heatNo(h),
        strand,
        piece,
        10_000,
        1500,
        230,
        (h % 8) * 45 + (piece - 1) * 10,
        piece === 1 && h % 8 !== 0,
      ];
    },
    HEATS * SLABS_PER_HEAT,
  );

  runTask("prepare", dir);
  const results: Record<"load" | "stream" | "import", TaskResult[]> = { load: [], stream: [], import: [] };
  for (let r = 0; r < RUNS; r++) for (const task of ["load", "stream", "import"] as const) results[task].push(runTask(task, dir)!);

  const m = (task: "load" | "stream" | "import", file: "heats" | "slabs") => median(results[task].map((x) => x[file]));
  const f = (x: number) => `${x.toFixed(2)} s`.padStart(9);
  const size = (file: string) => `${(fs.statSync(path.join(dir, file)).size / 1e6).toFixed(1)} MB`;
  const rows = results.import[0]!.rows!;
  console.log("");
  console.log("file       rows     size  exceljs load  exceljs stream    import    rows/s  import/load  import/stream   target");
  const total = { load: 0, stream: 0, import: 0, rows: 0 };
  for (const file of ["heats", "slabs"] as const) {
    const load = m("load", file);
    const stream = m("stream", file);
    const imp = m("import", file);
    total.load += load;
    total.stream += stream;
    total.import += imp;
    total.rows += rows[file]!;
    console.log(
      `${file.padEnd(8)} ${String(rows[file]).padStart(7)} ${size(`${file}.xlsx`).padStart(8)} ${f(load)}      ${f(stream)} ${f(imp)} ${Math.round(
        rows[file]! / imp,
      )
        .toLocaleString("en")
        .padStart(9)}      ${(imp / load).toFixed(2)}×          ${(imp / stream).toFixed(2)}×     ≤ 1.50×`,
    );
  }
  const vsLoad = total.import / total.load;
  const vsStream = total.import / total.stream;
  console.log(
    `all      ${String(total.rows).padStart(7)}          ${f(total.load)}      ${f(total.stream)} ${f(total.import)} ${Math.round(total.rows / total.import)
      .toLocaleString("en")
      .padStart(9)}      ${vsLoad.toFixed(2)}× ${vsLoad <= 1.5 ? "met" : "NOT met"}  ${vsStream.toFixed(2)}× ${vsStream <= 1.5 ? "met" : "NOT met"}`,
  );
  const phases = results.import.map((x) => x.phases!);
  for (const file of ["heats", "slabs"]) {
    const keys = [...new Set(phases.flatMap((p) => Object.keys(p[file]!)))].filter((k) => k !== "wrote ahead");
    const ahead = phases.filter((p) => p[file]!["wrote ahead"] === 1).length;
    console.log(
      `  ${file} import phases (median): ${keys.map((k) => `${k} ${median(phases.map((p) => p[file]![k] ?? 0)).toFixed(2)} s`).join(", ")}; wrote ahead in ${ahead} of ${phases.length} runs`,
    );
  }
  const runTotal = (x: TaskResult) => x.heats + x.slabs;
  console.log(
    `  per run, import / exceljs stream: ${results.import.map((x, i) => `${runTotal(x).toFixed(2)} s / ${runTotal(results.stream[i]!).toFixed(2)} s = ${(runTotal(x) / runTotal(results.stream[i]!)).toFixed(2)}× (peak ${x.rssMb.toFixed(0)} MB)`).join("; ")}`,
  );
  console.log(
    `peak memory (RSS, median): import ${median(results.import.map((x) => x.rssMb)).toFixed(0)} MB (target ≤ 250 MB; of it ${median(results.import.map((x) => x.baseMb)).toFixed(0)} MB before reading: Node, tsx, the modules, the database, the warmed-up file-type and reader code); exceljs load alone ${median(results.load.map((x) => x.rssMb)).toFixed(0)} MB; exceljs stream alone ${median(results.stream.map((x) => x.rssMb)).toFixed(0)} MB`,
  );
  fs.rmSync(dir, { recursive: true, force: true });
}

const [task, taskDir] = process.argv.slice(2);
(task === "import" ? importTask(taskDir!) : main()).catch((err) => {
  console.error(err);
  process.exit(1);
});
