/**
 * Hard kills (SIGKILL: no shutdown handler runs) of the real server process while it writes, then a
 * look at the files it left: the database must be intact, every photo row must have its files, no
 * import may be half-written, and the next start must tidy up and carry on.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import sharp from "sharp";
import { afterEach, describe, expect, it } from "vitest";
import { csv, HEAT_FILE_HEADERS, heatFileRow } from "../helpers/workbooks";
import { disposeServer, startServer, waitFor, type ServerProcess } from "../helpers/server-process";

let servers: ServerProcess[] = [];
afterEach(async () => {
  for (const s of servers) await disposeServer(s, false);
  for (const dir of new Set(servers.map((s) => s.files.dir))) fs.rmSync(dir, { recursive: true, force: true });
  servers = [];
});
const track = (s: ServerProcess) => (servers.push(s), s);

/** Opens the server's database file directly, as an operator would after the crash. */
function openFile(file: string) {
  return new Database(file, { fileMustExist: true });
}

function integrity(file: string): string[] {
  const db = openFile(file);
  try {
    return db.prepare("pragma integrity_check").pluck().all() as string[];
  } finally {
    db.close();
  }
}

/** Every file under UPLOAD_DIR/photos, relative to UPLOAD_DIR (the form the rows store). */
function photoFiles(uploadDir: string): string[] {
  const root = path.join(uploadDir, "photos");
  if (!fs.existsSync(root)) return [];
  return fs.readdirSync(root).flatMap((d) => fs.readdirSync(path.join(root, d)).map((f) => path.join("photos", d, f)));
}

function photoRows(file: string): { id: string; display_file: string; thumb_file: string }[] {
  const db = openFile(file);
  try {
    return db.prepare("select id, display_file, thumb_file from defect_photos").all() as { id: string; display_file: string; thumb_file: string }[];
  } finally {
    db.close();
  }
}

/** A camera-sized JPEG of noise (noise does not compress: a few MB, and real decoding work). */
async function noiseJpeg(width: number, height: number): Promise<Buffer> {
  return sharp(crypto.randomBytes(width * height * 3), { raw: { width, height, channels: 3 } })
    .jpeg({ quality: 100 })
    .toBuffer();
}

type Outcome = { status: number; body: { photos?: { id: string }[] } } | { error: string };

describe("SIGKILL during photo uploads", () => {
  it("when the server is killed with uploads in flight, then the database is intact, every row has its files and the next start removes the orphans", async () => {
    const srv = track(await startServer());
    const cookie = await srv.signIn("inspector@demo.test");
    const db0 = openFile(srv.files.databaseFile);
    const slabId = db0.prepare("select slab_id from slabs order by slab_id limit 1").pluck().get() as string;
    const rowsBefore = db0.prepare("select count(*) from defect_photos").pluck().get() as number;
    db0.close();
    const created = await fetch(`${srv.baseUrl}/api/defects`, {
      method: "POST",
      headers: { cookie, origin: srv.baseUrl, "content-type": "application/json" },
      body: JSON.stringify({
        slab_id: slabId,
        type_code: "SLG",
        face: "inner",
        position_along_mm: 1200,
        position_across_mm: 400,
        severity: 2,
        disposition: "scarf",
        client_key: "fault-kill-photos-1",
      }),
    });
    expect(created.status, await created.clone().text()).toBe(201);
    const defectId = ((await created.json()) as { id: number }).id;

    const photos = await Promise.all([noiseJpeg(1400, 1050), noiseJpeg(1300, 975)]);
    for (const p of photos) expect(p.length).toBeGreaterThan(1_500_000);
    const REQUESTS = 8;
    const outcomes: (Outcome | undefined)[] = new Array(REQUESTS).fill(undefined);
    // A steady stream of uploads, as from several tablets at once: a new one every 100 ms, so that
    // when the first is answered later ones are surely still on their way. Three people send them
    // (at most three each, the per-person limit on uploads in flight), as three tablets would.
    const senders = [cookie, await srv.signIn("quality@demo.test"), await srv.signIn("admin@demo.test")];
    const inFlight = Array.from({ length: REQUESTS }, async (_, i) => {
      await new Promise((r) => setTimeout(r, i * 100));
      const form = new FormData();
      form.append("photos", new Blob([new Uint8Array(photos[i % 2]!)], { type: "image/jpeg" }), `IMG_${1000 + 2 * i}.JPG`);
      form.append("photos", new Blob([new Uint8Array(photos[(i + 1) % 2]!)], { type: "image/jpeg" }), `IMG_${1001 + 2 * i}.JPG`);
      try {
        const res = await fetch(`${srv.baseUrl}/api/defects/${defectId}/photos`, {
          method: "POST",
          headers: { cookie: senders[i % senders.length]!, origin: srv.baseUrl },
          body: form,
        });
        outcomes[i] = { status: res.status, body: (await res.json()) as { photos?: { id: string }[] } };
      } catch (err) {
        outcomes[i] = { error: String((err as Error).cause ?? err) };
      }
    });

    // Kill as soon as one upload has been answered (its rows are committed) while others are still running.
    await waitFor("a first stored upload", () => (outcomes.some((o) => o && "status" in o) ? true : undefined), 60_000, 10);
    srv.kill("SIGKILL");
    expect((await srv.waitExit()).signal).toBe("SIGKILL");
    await Promise.all(inFlight);

    const answered = outcomes.filter((o): o is Extract<Outcome, { status: number }> => o !== undefined && "status" in o);
    const cut = outcomes.filter((o) => o !== undefined && "error" in o);
    // The kill did land mid-way: some uploads were answered, some cut off; none was refused.
    expect(answered.length).toBeGreaterThan(0);
    expect(cut.length).toBeGreaterThan(0);
    expect(answered.map((o) => o.status)).toEqual(answered.map(() => 201));

    expect(integrity(srv.files.databaseFile)).toEqual(["ok"]);
    const rows = photoRows(srv.files.databaseFile);
    // Every answered upload is there (a 201 means stored), and every row's files exist.
    const rowIds = new Set(rows.map((r) => r.id));
    for (const o of answered) for (const p of o.body.photos!) expect(rowIds.has(p.id), p.id).toBe(true);
    expect(rows.length).toBeGreaterThanOrEqual(rowsBefore + 2 * answered.length);
    for (const r of rows) {
      expect(fs.existsSync(path.join(srv.files.uploadDir, r.display_file)), r.display_file).toBe(true);
      expect(fs.existsSync(path.join(srv.files.uploadDir, r.thumb_file)), r.thumb_file).toBe(true);
    }
    const known = new Set(rows.flatMap((r) => [r.display_file, r.thumb_file]));
    const orphansAfterKill = photoFiles(srv.files.uploadDir).filter((f) => !known.has(f));
    console.info(
      `photo kill: ${answered.length} uploads answered, ${cut.length} cut off, ${rows.length - rowsBefore} rows, ${orphansAfterKill.length} orphaned files after the kill`,
    );

    // At start-up the cleanup removes every orphan written before the new process began, however
    // young (the hourly pass leaves files younger than ten minutes; tests/server/photos.test.ts).
    // Besides whatever the kill left, one file of our own stands for a crash between file and row.
    const dir = path.join(srv.files.uploadDir, "photos", "ff");
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, "ffffffff-ffff-4fff-8fff-ffffffffffff.webp"), photos[0]!);
    expect(photoFiles(srv.files.uploadDir).filter((f) => !known.has(f)).length).toBe(orphansAfterKill.length + 1);
    const again = track(await startServer({ files: srv.files }));
    await waitFor("the start-up cleanup", () => (photoFiles(srv.files.uploadDir).every((f) => known.has(f)) ? true : undefined), 15_000, 100);
    // Nothing a row refers to was removed, and the rows are the ones the crash left.
    expect(photoFiles(srv.files.uploadDir).sort()).toEqual([...known].sort());
    expect(photoRows(srv.files.databaseFile).length).toBe(rows.length);

    // The restarted app serves the defect with its stored photos.
    const cookie2 = await again.signIn("inspector@demo.test");
    const defect = await fetch(`${again.baseUrl}/api/defects/${defectId}`, { headers: { cookie: cookie2 } });
    expect(defect.status).toBe(200);
    const shown = ((await defect.json()) as { photos: { id: string; thumbUrl: string }[] }).photos;
    expect(shown.length).toBe(rows.length - rowsBefore);
    const thumb = await fetch(`${again.baseUrl}${shown[0]!.thumbUrl}`, { headers: { cookie: cookie2 } });
    expect(thumb.status).toBe(200);
    expect((await sharp(Buffer.from(await thumb.arrayBuffer())).metadata()).format).toBe("jpeg");
  }, 120_000);
});

const HEAT_HEADERS = HEAT_FILE_HEADERS;
const heat = (i: number) => heatFileRow("KIL", i);

describe("SIGKILL during an import", () => {
  it("when the server is killed inside the import's transaction, then no heat of it is written, no run is recorded, and the same file imports whole after a restart", async () => {
    // The mail worker's pass is the only other writer; keep it out of the window we watch.
    const env = { MAIL_POLL_MS: "600000" };
    const srv = track(await startServer({ env }));
    const cookie = await srv.signIn("process@demo.test");
    const N = 30_000;
    const file = csv(
      HEAT_HEADERS,
      Array.from({ length: N }, (_, i) => heat(i)),
    );
    const fileSha = crypto.createHash("sha256").update(file).digest("hex");
    const count = (sql: string, ...args: unknown[]) => {
      const db = openFile(srv.files.databaseFile);
      try {
        return db
          .prepare(sql)
          .pluck()
          .get(...args) as number;
      } finally {
        db.close();
      }
    };
    const heatsBefore = count("select count(*) from heats");
    const runsBefore = count("select count(*) from import_runs");
    expect(heatsBefore).toBeGreaterThan(0);

    let outcome: { status: number } | { error: string } | undefined;
    const form = new FormData();
    form.append("file", new Blob([new Uint8Array(file)], { type: "text/csv" }), "kill-heats.csv");
    const request = fetch(`${srv.baseUrl}/api/import/heats`, { method: "POST", headers: { cookie, origin: srv.baseUrl }, body: form }).then(
      (res) => void (outcome = { status: res.status }),
      (err: Error) => void (outcome = { error: String(err.cause ?? err) }),
    );

    // The import runs in one BEGIN IMMEDIATE transaction: it holds the write lock from the start of its
    // plan to its commit. Watch for that lock from a second connection and kill inside it.
    const probe = new Database(srv.files.databaseFile, { fileMustExist: true, timeout: 0 });
    const locked = () => {
      try {
        probe.exec("BEGIN IMMEDIATE");
        probe.exec("ROLLBACK");
        return false;
      } catch (err) {
        if ((err as { code?: string }).code === "SQLITE_BUSY") return true;
        throw err;
      }
    };
    let held = 0;
    await waitFor(
      "the import's write lock",
      () => {
        if (outcome) throw new Error(`the import finished before the kill: ${JSON.stringify(outcome)}`);
        held = locked() ? held + 1 : 0;
        return held >= 3 ? true : undefined;
      },
      40_000,
      20,
    );
    srv.kill("SIGKILL");
    probe.close();
    expect((await srv.waitExit()).signal).toBe("SIGKILL");
    await request;
    expect(outcome && "error" in outcome, JSON.stringify(outcome)).toBe(true);

    expect(integrity(srv.files.databaseFile)).toEqual(["ok"]);
    const heatsAfter = count("select count(*) from heats");
    const runsOfFile = count("select count(*) from import_runs where sha256 = ?", fileSha);
    // All or nothing, and the run row belongs to the same transaction as the heats.
    expect([heatsBefore, heatsBefore + N]).toContain(heatsAfter);
    expect(runsOfFile).toBe(heatsAfter === heatsBefore ? 0 : 1);
    expect(count("select count(*) from heats where heat_no like 'KIL%'")).toBe(heatsAfter - heatsBefore);
    expect(count("select count(*) from sequences where sequence_no like 'KILSEQ-%'")).toBe(heatsAfter === heatsBefore ? 0 : N / 8);
    console.info(`import kill: ${heatsAfter === heatsBefore ? "rolled back" : "committed just before the kill"}`);

    const again = track(await startServer({ files: srv.files, env }));
    const cookie2 = await again.signIn("process@demo.test");
    const form2 = new FormData();
    form2.append("file", new Blob([new Uint8Array(file)], { type: "text/csv" }), "kill-heats.csv");
    const res = await fetch(`${again.baseUrl}/api/import/heats`, { method: "POST", headers: { cookie: cookie2, origin: again.baseUrl }, body: form2 });
    const body = (await res.json()) as { rows: number; counts: { created: number; updated: number; unchanged: number } };
    expect(res.status, JSON.stringify(body).slice(0, 500)).toBe(201);
    expect(body.rows).toBe(N);
    expect(body.counts).toEqual(heatsAfter === heatsBefore ? { created: N, updated: 0, unchanged: 0 } : { created: 0, updated: 0, unchanged: N });
    expect(count("select count(*) from heats")).toBe(heatsBefore + N);
    expect(count("select count(*) from import_runs")).toBe(runsBefore + runsOfFile + 1);
    expect(integrity(srv.files.databaseFile)).toEqual(["ok"]);
  }, 120_000);
});
