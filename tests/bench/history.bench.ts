/**
 * `npm run bench:history` — the heat history workbook for a heat of 12 slabs, 40 defects and 80
 * photos (each stored through the real photo pipeline, so the thumbnails are the real ones), built
 * from the database: the history query, the ten sheets, 80 embedded thumbnails, formats and print
 * setup. Baseline in the same run: exceljs alone writing a workbook of the same 80 thumbnails and
 * the same number of rows on one sheet. 7 runs each, alternating; medians shown.
 * Target: under 2 s on this machine.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import ExcelJS from "exceljs";
import sharp from "sharp";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedReference } from "../../server/seed/seed";
import { addPhotos } from "../../server/services/defects.service";
import { heatHistory, historyWorkbook } from "../../server/services/history.service";

const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const SLABS = 12;
const DEFECTS = 40;
const PHOTOS_PER_DEFECT = 2;
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-history-"));
  const uploads = path.join(dir, "uploads");
  const db = openDatabase(path.join(dir, "bench.db"));
  runMigrations(db);
  seedReference(db);
  const c = db.$client;
  const userId = "bench-user";
  c.prepare("insert into user (id, name, email, role) values (?, 'Bench quality', 'bench@example.test', 'quality')").run(userId);
  const t0 = Date.UTC(2026, 10, 20, 8, 0);
  c.prepare(
    "insert into heats (heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, c_pct, mn_pct, si_pct) values ('BENCH1', 1, 1, ?, ?, 1.4, 0.12, 0.9, 0.2)",
  ).run(t0, t0 + 40 * 60_000);
  const strands = c.prepare("select id from strands where caster_id = 1 order by strand_no").pluck().all() as number[];
  for (let i = 0; i < SLABS; i++) {
    c.prepare(
      "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at) values (?, 1, ?, ?, 10000, 1500, 230, 27, ?)",
    ).run(`BENCH1-${i + 1}`, strands[i % strands.length], Math.floor(i / strands.length) + 1, t0 + i * 180_000);
  }
  for (let s = 0; s < strands.length; s++) {
    const ins = c.prepare("insert into process_samples (strand_id, sampled_at, casting_speed_m_min, embr_current_a) values (?, ?, 1.4, 300)");
    for (let k = 0; k < 240; k++) ins.run(strands[s], t0 + k * 10_000);
  }
  const user = { id: userId, name: "Bench", email: "bench@example.test", roles: ["quality" as const] };
  // A noisy scene, so the thumbnails weigh what camera photos' thumbnails weigh.
  const W = 1600;
  const H = 1200;
  const raw = Buffer.alloc(W * H * 3);
  let seed = 7;
  for (let i = 0; i < raw.length; i++) raw[i] = 60 + (((seed = (seed * 1103515245 + 12345) >>> 0) >>> 24) % 120) + Math.round(40 * Math.sin(i / 9000));
  const photoJpeg = await sharp(raw, { raw: { width: W, height: H, channels: 3 } })
    .jpeg({ quality: 85 })
    .toBuffer();
  for (let d = 0; d < DEFECTS; d++) {
    const id = Number(
      c
        .prepare(
          "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, note, found_at, created_by) values (?, 1, 'inner', ?, 500, 2, 'slab_yard', 'scarf', ?, ?, ?)",
        )
        .run((d % SLABS) + 1, 1000 + d * 100, d % 5 === 0 ? "=1+1 looks like a formula" : "Along the casting direction", t0 + d * 60_000, userId)
        .lastInsertRowid,
    );
    for (let p = 0; p < PHOTOS_PER_DEFECT; p++) await addPhotos(db, uploads, user, id, [{ buffer: photoJpeg, originalname: `d${d}-${p}.jpg` }], []);
  }
  const photos = c.prepare("select count(*) from defect_photos").pluck().get() as number;
  const thumbs = (c.prepare("select thumb_file from defect_photos order by id").pluck().all() as string[]).map((f) => path.join(uploads, f));

  const ours = async () => historyWorkbook(db, heatHistory(db, "BENCH1"), { baseUrl: "http://localhost:3000", uploadDir: uploads, by: "bench" });
  const rows = heatHistory(db, "BENCH1");
  const rowCount = rows.slabs.length + rows.defects.length + rows.causes.length + 960 + 14;
  const bare = async () => {
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("Only");
    for (let i = 0; i < rowCount; i++) ws.addRow([i, "text", 1.5, new Date(t0)]);
    thumbs.forEach((f, i) =>
      ws.addImage(wb.addImage({ buffer: fs.readFileSync(f) as never, extension: "jpeg" }), { tl: { col: 5, row: i }, ext: { width: 100, height: 75 } }),
    );
    return Buffer.from(await wb.xlsx.writeBuffer());
  };
  await ours();
  await bare();
  const a: number[] = [];
  const b: number[] = [];
  let size = 0;
  for (let i = 0; i < RUNS; i++) {
    let s = performance.now();
    size = (await ours()).length;
    a.push((performance.now() - s) / 1000);
    s = performance.now();
    await bare();
    b.push((performance.now() - s) / 1000);
  }
  const ma = median(a);
  const mb = median(b);
  console.log(`Heat history workbook: ${SLABS} slabs, ${DEFECTS} defects, ${photos} photos (${thumbs.length} thumbnails embedded), ${RUNS} runs, medians`);
  console.log("");
  console.log(`exceljs alone (same thumbnails, ${rowCount} rows)   ${mb.toFixed(3)} s`);
  console.log(`Strandsight history workbook                ${ma.toFixed(3)} s   ${(size / 1024).toFixed(0)} kB, ten sheets`);
  console.log(`ratio                                       ${(ma / mb).toFixed(2)}×`);
  console.log(`target                                      < 2 s  ${ma < 2 ? "met" : "NOT met"}`);
  db.$client.close();
  fs.rmSync(dir, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
