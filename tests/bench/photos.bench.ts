/**
 * `npm run bench:photos` — stores a 12-MP camera JPEG through the real pipeline (content check,
 * EXIF orientation, metadata stripped, display WebP ≤ 2048 px and JPEG thumbnail, SHA-256, files
 * written, the row in SQLite) and compares it with sharp alone doing the same two resizes from one
 * decode, in the same run, alternating, 7 times each; medians shown. Target: at most 1.3×.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { execFileSync } from "node:child_process";
import sharp from "sharp";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { seedReference } from "../../server/seed/seed";
import { addPhotos } from "../../server/services/defects.service";
import { DISPLAY_MAX_PX, THUMB_MAX_PX } from "../../server/services/photos.service";

const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const W = 4000;
const H = 3000;

async function cameraJpeg(dir: string): Promise<Buffer> {
  // A smooth scene with sensor-like noise, so the JPEG is the size a tablet camera writes.
  const raw = Buffer.alloc(W * H * 3);
  let seed = 12345;
  const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32;
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      const i = (y * W + x) * 3;
      const base = 90 + 60 * Math.sin(x / 310) * Math.cos(y / 230);
      raw[i] = Math.max(0, Math.min(255, base + 40 + rnd() * 18));
      raw[i + 1] = Math.max(0, Math.min(255, base + rnd() * 18));
      raw[i + 2] = Math.max(0, Math.min(255, base - 30 + rnd() * 18));
    }
  }
  const file = path.join(dir, "camera.jpg");
  fs.writeFileSync(
    file,
    await sharp(raw, { raw: { width: W, height: H, channels: 3 } })
      .jpeg({ quality: 92 })
      .toBuffer(),
  );
  try {
    execFileSync("exiftool", ["-q", "-n", "-overwrite_original", "-Orientation=6", "-GPSLatitude=59.33", "-GPSLongitude=18.07", file]);
  } catch {
    console.log("(exiftool not found: the photo has no EXIF orientation)");
  }
  return fs.readFileSync(file);
}

/** What sharp alone does for the same result: one decode, auto-orient, two resizes, two encodes. */
async function sharpAlone(buf: Buffer) {
  const base = sharp(buf, { limitInputPixels: 50_000_000 }).autoOrient();
  await Promise.all([
    base.clone().resize({ width: DISPLAY_MAX_PX, height: DISPLAY_MAX_PX, fit: "inside", withoutEnlargement: true }).webp({ quality: 82 }).toBuffer(),
    base.clone().resize({ width: THUMB_MAX_PX, height: THUMB_MAX_PX, fit: "inside", withoutEnlargement: true }).jpeg({ quality: 78, mozjpeg: true }).toBuffer(),
  ]);
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-photos-"));
  const photo = await cameraJpeg(dir);
  const db = openDatabase(path.join(dir, "bench.db"));
  runMigrations(db);
  seedReference(db);
  const c = db.$client;
  const userId = "bench-user";
  c.prepare("insert into user (id, name, email, role) values (?, 'Bench', 'bench@example.test', 'inspector')").run(userId);
  c.prepare("insert into heats (heat_no, caster_id, grade_id, cast_start, casting_speed_m_min) values ('BENCH1', 1, 1, 0, 1.4)").run();
  c.prepare(
    "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t) values ('BENCH1-101', 1, 1, 1, 10000, 1500, 230, 27)",
  ).run();
  c.prepare(
    "insert into defects (slab_id, type_id, face, severity, stage, disposition, found_at, created_by) values (1, 1, 'inner', 2, 'slab_yard', 'scarf', 0, ?)",
  ).run(userId);
  const user = { id: userId, name: "Bench", email: "bench@example.test", roles: ["inspector" as const] };
  const uploads = path.join(dir, "uploads");
  console.log(
    `Photo pipeline benchmark: ${W} × ${H} px (12 MP) JPEG, ${(photo.length / 1e6).toFixed(1)} MB, ${RUNS} runs each, medians (sharp ${sharp.versions.sharp}, libvips ${sharp.versions.vips})`,
  );
  await sharpAlone(photo); // warm-up
  const alone: number[] = [];
  const pipeline: number[] = [];
  for (let i = 0; i < RUNS; i++) {
    let t0 = performance.now();
    await sharpAlone(photo);
    alone.push((performance.now() - t0) / 1000);
    t0 = performance.now();
    await addPhotos(db, uploads, user, 1, [{ buffer: photo, originalname: "camera.jpg" }], []);
    pipeline.push((performance.now() - t0) / 1000);
  }
  const a = median(alone);
  const p = median(pipeline);
  console.log("");
  console.log(`sharp alone (two resizes)   ${a.toFixed(3)} s`);
  console.log(`Strandsight pipeline        ${p.toFixed(3)} s   (check, orient, strip, two sizes, SHA-256, files, row)`);
  console.log(`ratio                       ${(p / a).toFixed(2)}×   target ≤ 1.30×  ${p / a <= 1.3 ? "met" : "NOT met"}`);
  db.$client.close();
  fs.rmSync(dir, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
