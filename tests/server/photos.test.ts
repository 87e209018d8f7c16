import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import sharp from "sharp";
import { knownPhotoFiles } from "../../server/services/defects.service";
import { cleanupOrphanFiles } from "../../server/services/photos.service";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { exifTags, heicHeader, jpegWithOrientationAndGps, pngBomb } from "../helpers/images";

let t: TestApp;
let inspector: request.Agent;
let defectId: number;

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  inspector = await t.agentFor("inspector");
  const slabId = t.db.$client.prepare("select slab_id from slabs limit 1").pluck().get() as string;
  const res = await inspector.post("/api/defects").set("Origin", t.env.BETTER_AUTH_URL).send({
    slab_id: slabId,
    type_code: "SLG",
    face: "inner",
    position_along_mm: 1000,
    position_across_mm: 500,
    severity: 2,
    disposition: "scarf",
    client_key: "photo-test-defect-1",
  });
  defectId = res.body.id;
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const rows = () => t.db.$client.prepare("select count(*) from defect_photos").pluck().get() as number;
const files = () => {
  const root = path.join(t.env.UPLOAD_DIR, "photos");
  return fs.existsSync(root) ? fs.readdirSync(root).flatMap((d) => fs.readdirSync(path.join(root, d))) : [];
};
const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on("data", (c: Buffer) => chunks.push(c));
  res.on("end", () => cb(null, Buffer.concat(chunks)));
};

describe("photo pipeline", () => {
  it("when a JPEG with EXIF orientation 6 and GPS is uploaded, then the stored copies are upright and carry no metadata", async () => {
    const camera = await jpegWithOrientationAndGps(600, 400);
    expect(exifTags(camera)["EXIF:GPSLatitude"]).toBe(59.3293); // exiftool reads the GPS we wrote
    const res = await inspector.post(`/api/defects/${defectId}/photos`).set("Origin", O()).attach("photos", camera, "IMG_0001.JPG");
    expect(res.status).toBe(201);
    const [photo] = res.body.photos;
    // Orientation 6 = rotate 90° clockwise to view: 600 × 400 becomes 400 × 600.
    expect([photo.width, photo.height]).toEqual([400, 600]);
    const display = (await inspector.get(photo.url).buffer(true).parse(binary)).body as Buffer;
    const thumb = (await inspector.get(photo.thumbUrl).buffer(true).parse(binary)).body as Buffer;
    const dm = await sharp(display).metadata();
    expect(dm.format).toBe("webp");
    expect([dm.width, dm.height]).toEqual([400, 600]);
    // The red left half of the sensor image is at the top once upright, the blue right half at the bottom.
    const { data } = await sharp(display).raw().toBuffer({ resolveWithObject: true });
    const px = (x: number, y: number) => [data[(y * 400 + x) * 3], data[(y * 400 + x) * 3 + 1], data[(y * 400 + x) * 3 + 2]];
    expect(px(200, 50)[0]).toBeGreaterThan(180);
    expect(px(200, 550)[2]).toBeGreaterThan(180);
    const tm = await sharp(thumb).metadata();
    expect(tm.format).toBe("jpeg");
    expect(Math.max(tm.width!, tm.height!)).toBe(320);
    for (const stored of [display, thumb]) {
      const tags = exifTags(stored);
      expect(Object.keys(tags).filter((k) => /GPS|Orientation|Make/.test(k))).toEqual([]);
    }
    const row = t.db.$client.prepare("select * from defect_photos where id = ?").get(photo.id) as Record<string, any>;
    expect(row.sha256).toMatch(/^[0-9a-f]{64}$/);
    // Files are named by generated ids, never by the uploaded name.
    expect(row.display_file).toMatch(new RegExp(`${photo.id}\\.webp$`));
    expect(files().some((f) => f.includes("IMG_0001"))).toBe(false);
  });

  it("when a text file is named .jpg, then 415 and nothing is stored", async () => {
    const [r0, f0] = [rows(), files().length];
    const res = await inspector
      .post(`/api/defects/${defectId}/photos`)
      .set("Origin", O())
      .attach("photos", Buffer.from("not a photo at all\n".repeat(50)), { filename: "defect.jpg", contentType: "image/jpeg" });
    expect(res.status).toBe(415);
    expect(res.body.error.code).toBe("not_an_image");
    expect([rows(), files().length]).toEqual([r0, f0]);
  });

  it("when a PNG claims 30,000 × 30,000 pixels, then it is refused as too many pixels before any decoding", async () => {
    const bomb = await pngBomb(30_000, 30_000);
    expect(bomb.length).toBeLessThan(1000);
    const res = await inspector.post(`/api/defects/${defectId}/photos`).set("Origin", O()).attach("photos", bomb, "bomb.png");
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe("too_many_pixels");
    expect(res.body.error.message).toContain("30000 × 30000");
  });

  it("when a HEIC photo arrives, then 415 says HEIC cannot be read and what to do", async () => {
    const res = await inspector.post(`/api/defects/${defectId}/photos`).set("Origin", O()).attach("photos", heicHeader(), "IMG_0002.HEIC");
    expect(res.status).toBe(415);
    expect(res.body.error.code).toBe("heic_not_supported");
    expect(res.body.error.message).toContain("HEIC");
  });

  it("when one file of several is bad, then none of them is stored", async () => {
    const good = await sharp({ create: { width: 64, height: 48, channels: 3, background: "#357" } })
      .png()
      .toBuffer();
    const [r0, f0] = [rows(), files().length];
    const res = await inspector
      .post(`/api/defects/${defectId}/photos`)
      .set("Origin", O())
      .attach("photos", good, "a.png")
      .attach("photos", Buffer.from("%PDF-1.7 not an image"), "b.jpg");
    expect(res.status).toBe(415);
    expect([rows(), files().length]).toEqual([r0, f0]);
  });

  it("when a file is over 25 MB, then 413", async () => {
    const res = await inspector
      .post(`/api/defects/${defectId}/photos`)
      .set("Origin", O())
      .attach("photos", Buffer.alloc(26 * 1024 * 1024, 1), "huge.jpg");
    expect(res.status).toBe(413);
  });

  it("when PNG, WebP and AVIF arrive, then each is stored; the same photo key again is stored once", async () => {
    const base = sharp({ create: { width: 300, height: 200, channels: 3, background: "#a50" } });
    const png = await base.clone().png().toBuffer();
    const webp = await base.clone().webp().toBuffer();
    const avif = await base.clone().avif().toBuffer();
    const r0 = rows();
    const res = await inspector
      .post(`/api/defects/${defectId}/photos`)
      .set("Origin", O())
      .field("client_keys", "pk-png-0001,pk-webp-0001,pk-avif-0001")
      .attach("photos", png, "a.png")
      .attach("photos", webp, "b.webp")
      .attach("photos", avif, "c.avif");
    expect(res.status).toBe(201);
    expect(res.body.photos).toHaveLength(3);
    expect(rows()).toBe(r0 + 3);
    const again = await inspector.post(`/api/defects/${defectId}/photos`).set("Origin", O()).field("client_keys", "pk-png-0001").attach("photos", png, "a.png");
    expect(again.status).toBe(201);
    expect(again.body.photos.map((p: { id: string }) => p.id)).toEqual([res.body.photos[0].id]);
    expect(rows()).toBe(r0 + 3);
  });

  it("when a photo is asked for signed out, then 401; signed in, the right type and long private caching, and 304 on revalidation", async () => {
    const id = t.db.$client.prepare("select id from defect_photos limit 1").pluck().get() as string;
    expect((await request(t.app).get(`/api/photos/${id}`)).status).toBe(401);
    const res = await inspector.get(`/api/photos/${id}/thumb`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toBe("image/jpeg");
    expect(res.headers["cache-control"]).toBe("private, max-age=31536000, immutable");
    const again = await inspector.get(`/api/photos/${id}/thumb`).set("If-None-Match", res.headers.etag!);
    expect(again.status).toBe(304);
    expect((await inspector.get("/api/photos/..%2F..%2Fapp.db")).status).toBe(400);
    expect((await inspector.get(`/api/photos/${crypto.randomUUID()}`)).status).toBe(404);
  });
});

describe("orphan cleanup", () => {
  it("when files have no row (a crash between file and row), then the cleanup removes them and keeps the rest", async () => {
    const dir = path.join(t.env.UPLOAD_DIR, "photos", "zz");
    fs.mkdirSync(dir, { recursive: true });
    const orphan = path.join(dir, "zz-orphan.webp");
    const tmp = path.join(dir, "zz-half.webp.123.tmp");
    fs.writeFileSync(orphan, "x");
    fs.writeFileSync(tmp, "x");
    const old = new Date(Date.now() - 60 * 60_000);
    fs.utimesSync(orphan, old, old);
    fs.utimesSync(tmp, old, old);
    const fresh = path.join(dir, "zz-fresh.webp");
    fs.writeFileSync(fresh, "x"); // an upload in flight: too young to touch
    // Its time set from the process's clock like the others' (the same as the file system's, unless
    // the suite runs with a shifted clock to find tests that depend on the date: DEVELOPERS.md).
    const now = new Date();
    fs.utimesSync(fresh, now, now);
    const known = knownPhotoFiles(t.db);
    const before = files().length;
    const removed = await cleanupOrphanFiles(t.env.UPLOAD_DIR, (f) => known.has(f));
    expect(removed.sort()).toEqual([path.join("photos", "zz", "zz-half.webp.123.tmp"), path.join("photos", "zz", "zz-orphan.webp")]);
    expect(files().length).toBe(before - 2);
    // Every row still has both its files.
    for (const f of known) expect(fs.existsSync(path.join(t.env.UPLOAD_DIR, f)), f).toBe(true);
    expect(fs.existsSync(fresh)).toBe(true);
  });
});
