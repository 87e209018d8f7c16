import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { ARTIFACTS, collectPageErrors, makeJpeg, signInAs, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";
import { bytes } from "../../src/lib/format";
import { cameraPhoto12mp, fillDefect, meanColour, openSlabFromYard } from "../helpers/yard-form";

/**
 * Photos are made smaller on the tablet before they go into the outbox: a 12-MP camera JPEG is
 * picked through the yard form's real file input, saved, and the bytes that reach the server are
 * read from the upload requests themselves and checked against the row the server stored.
 */
const env = useAppAndBrowser({ scale: 0.02 });

const sha256 = (b: Buffer) => crypto.createHash("sha256").update(b).digest("hex");

interface SentPhoto {
  name: string;
  type: string;
  bytes: Buffer;
}

/**
 * Saves the entry with the network off, reads the photos the outbox then holds on the tablet
 * (IndexedDB), and turns the network back on so the outbox sends them. These are the bytes that go
 * up: the server's row records the SHA-256 of what it received, and the tests compare the two.
 * (Chromium does not hand the test the body of an upload whose file lives in IndexedDB, so the
 * request itself cannot be read.)
 */
async function saveAndReadOutbox(page: Page): Promise<SentPhoto[]> {
  await page.context().setOffline(true);
  await page.getByRole("button", { name: "Save defect" }).click();
  await page.getByTestId("flash").waitFor();
  const photos = await page.evaluate(
    () =>
      new Promise<{ name: string; type: string; b64: string }[]>((resolve, reject) => {
        const open = indexedDB.open("strandsight-outbox");
        open.onerror = () => reject(open.error ?? new Error("the outbox database did not open"));
        open.onsuccess = () => {
          const all = open.result.transaction("photos").objectStore("photos").getAll();
          all.onerror = () => reject(all.error ?? new Error("the photos could not be read"));
          all.onsuccess = async () => {
            const records = (all.result as { name: string; type: string; blob: Blob; addedAt: number }[]).sort((a, b) => a.addedAt - b.addedAt);
            open.result.close();
            resolve(
              await Promise.all(
                records.map(async (r) => {
                  const buf = new Uint8Array(await r.blob.arrayBuffer());
                  let s = "";
                  for (let i = 0; i < buf.length; i += 0x8000) s += String.fromCharCode(...buf.subarray(i, i + 0x8000));
                  return { name: r.name, type: r.type, b64: btoa(s) };
                }),
              ),
            );
          };
        };
      }),
  );
  await page.context().setOffline(false);
  return photos.map((p) => ({ name: p.name, type: p.type, bytes: Buffer.from(p.b64, "base64") }));
}

function freeSlab(offset: number): string {
  return env.server.db.$client
    .prepare("select s.slab_id from slabs s where not exists (select 1 from defects d where d.slab_id = s.id) order by s.id desc limit 1 offset ?")
    .pluck()
    .get(offset) as string;
}

async function yardPage() {
  const context = await env.browser.newContext({ viewport: TABLET, hasTouch: true });
  const page = await context.newPage();
  page.setDefaultTimeout(30_000);
  const errors = collectPageErrors(page);
  await signInAs(page, env.server.baseUrl, "inspector", TEST_PASSWORD);
  await page.waitForURL(/\/yard$/);
  return { context, page, errors };
}

interface PhotoRow {
  width: number;
  height: number;
  sha256: string;
  original_name: string;
}

function storedPhotos(slabId: string): PhotoRow[] {
  return env.server.db.$client
    .prepare(
      `select p.width, p.height, p.sha256, p.original_name from defect_photos p join defects d on d.id = p.defect_id
       join slabs s on s.id = d.slab_id where s.slab_id = ? and p.deleted_at is null order by p.created_at, p.rowid`,
    )
    .all(slabId) as PhotoRow[];
}

describe("photos made smaller on the tablet", { timeout: 180_000 }, () => {
  it("when a 12-MP camera photo turned by EXIF is picked in the yard form, then at most a quarter of its bytes go up, 2,560 px on the long edge, standing upright", async () => {
    const original = await cameraPhoto12mp();
    const originalMeta = await sharp(original).metadata();
    expect([originalMeta.width, originalMeta.height, originalMeta.orientation]).toEqual([4000, 3000, 6]);

    const slabId = freeSlab(0);
    const { context, page, errors } = await yardPage();
    await openSlabFromYard(page, slabId);
    await fillDefect(page);
    await page.getByTestId("photo-camera").setInputFiles({ name: "IMG_4711.jpg", mimeType: "image/jpeg", buffer: original });
    const picked = page.getByTestId("picked-photo");
    await picked.waitFor();
    await page.locator('[data-testid="picked-photo"][data-photo-ready="yes"]').waitFor({ timeout: 60_000 });
    const shownSize = await picked.getByTestId("picked-photo-size").textContent();
    // The photos section in the middle of the screen (a full-page picture puts the sticky save bar over it).
    await page.locator("#entry-photos").evaluate((el) => el.scrollIntoView({ block: "center" }));
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    await page.screenshot({ path: path.join(ARTIFACTS, "photo-scaled-form-tablet.png") });

    const sent = await saveAndReadOutbox(page);
    await page.locator('[data-testid="entry"][data-status="sent"]').waitFor({ timeout: 60_000 });
    expect(sent).toHaveLength(1);
    const up = sent[0]!;
    const upMeta = await sharp(up.bytes).metadata();

    // The figures, for the record.
    console.log(
      `12-MP photo: original ${original.length} bytes (${originalMeta.width} × ${originalMeta.height}, orientation ${originalMeta.orientation}); ` +
        `sent ${up.bytes.length} bytes (${upMeta.width} × ${upMeta.height}, ${upMeta.format}); ratio ${(up.bytes.length / original.length).toFixed(3)}; shown as "${shownSize}"`,
    );
    expect(up.bytes.length).toBeLessThanOrEqual(original.length / 4);
    expect(up.type).toBe("image/jpeg");
    expect(up.name).toBe("IMG_4711.jpg");
    // Upright: the camera's landscape pixels turned to portrait, no orientation tag left to obey.
    expect([upMeta.format, upMeta.width, upMeta.height]).toEqual(["jpeg", 1920, 2560]);
    expect(upMeta.orientation ?? 1).toBe(1);
    // The red block the camera stored top-left stands top-right once upright, as in the original viewed.
    const viewedOriginal = await meanColour(original, { left: 3000 - 400, top: 0, width: 300, height: 300 });
    const topRight = await meanColour(up.bytes, { left: 1920 - 250, top: 10, width: 200, height: 200 });
    const topLeft = await meanColour(up.bytes, { left: 10, top: 10, width: 200, height: 200 });
    expect(viewedOriginal.r).toBeGreaterThan(200);
    expect(topRight.r).toBeGreaterThan(200);
    expect(topRight.g).toBeLessThan(50);
    expect(topLeft.r).toBeLessThan(200);
    // The picker showed the smaller size.
    expect(shownSize).toBe(bytes(up.bytes.length));

    // The server stored exactly what was sent, through its own unchanged pipeline (display ≤ 2,048 px).
    const rows = storedPhotos(slabId);
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ sha256: sha256(up.bytes), width: 1536, height: 2048, original_name: "IMG_4711.jpg" });
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the photos are small, WebP or PNG, then small and WebP go as taken and a large PNG goes as a smaller JPEG", async () => {
    const small = await makeJpeg(1600, 1200);
    const webp = await sharp({ create: { width: 3200, height: 2400, channels: 3, background: "#6b6f73" } })
      .webp({ quality: 80 })
      .toBuffer();
    // A large PNG with a gradient (so it is not trivially small).
    const gradient = Buffer.alloc(3000 * 2000 * 3);
    for (let i = 0; i < 3000 * 2000; i++) {
      gradient[i * 3] = (i % 3000) % 256;
      gradient[i * 3 + 1] = Math.floor(i / 3000) % 256;
      gradient[i * 3 + 2] = 128;
    }
    const png = await sharp(gradient, { raw: { width: 3000, height: 2000, channels: 3 } })
      .png()
      .toBuffer();

    const slabId = freeSlab(1);
    const { context, page, errors } = await yardPage();
    await openSlabFromYard(page, slabId);
    await fillDefect(page);
    await page.getByTestId("photo-camera").setInputFiles([
      { name: "small.jpg", mimeType: "image/jpeg", buffer: small },
      { name: "surface.webp", mimeType: "image/webp", buffer: webp },
      { name: "scan.png", mimeType: "image/png", buffer: png },
    ]);
    await expect.poll(() => page.locator('[data-testid="picked-photo"][data-photo-ready="yes"]').count(), { timeout: 60_000 }).toBe(3);
    const sent = await saveAndReadOutbox(page);
    await page.locator('[data-testid="entry"][data-status="sent"]').waitFor({ timeout: 60_000 });
    expect(sent).toHaveLength(3);
    const byName = new Map(sent.map((p) => [p.name, p]));
    const keptSmall = byName.get("small.jpg");
    const keptWebp = byName.get("surface.webp");
    const scaledPng = byName.get("scan.jpg");

    expect(sha256(keptSmall!.bytes)).toBe(sha256(small));
    expect(sha256(keptWebp!.bytes)).toBe(sha256(webp));
    expect(scaledPng!.type).toBe("image/jpeg");
    const pngMeta = await sharp(scaledPng!.bytes).metadata();
    expect([pngMeta.format, pngMeta.width, pngMeta.height]).toEqual(["jpeg", 2560, 1707]);
    expect(
      storedPhotos(slabId)
        .map((r) => r.sha256)
        .sort(),
    ).toEqual([sha256(small), sha256(webp), sha256(scaledPng!.bytes)].sort());
    expect(
      storedPhotos(slabId)
        .map((r) => r.original_name)
        .sort(),
    ).toEqual(["scan.jpg", "small.jpg", "surface.webp"]);
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a photo cannot be read on the tablet, then it is kept as it was, never dropped", async () => {
    // JPEG by its name and type, but not decodable: the scaling fails, the photo stays.
    const broken = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0]), crypto.randomBytes(4000)]);
    const slabId = freeSlab(2);
    const { context, page, errors } = await yardPage();
    await openSlabFromYard(page, slabId);
    await page.getByTestId("photo-camera").setInputFiles({ name: "odd.jpg", mimeType: "image/jpeg", buffer: broken });
    await page.locator('[data-testid="picked-photo"][data-photo-ready="yes"]').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId("picked-photo").count()).toBe(1);
    expect(await page.getByTestId("picked-photo-size").textContent()).toBe(bytes(broken.length));
    expect(await page.getByRole("alert").count()).toBe(0);
    expect(errors).toEqual([]);
    await context.close();
  });
});
