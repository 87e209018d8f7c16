import sharp from "sharp";
import type { Page } from "playwright-core";

/**
 * A 12-MP camera photo as a tablet writes it: 4000 × 3000 stored pixels with sensor-like noise over
 * smooth gradients (so the JPEG has the size of a real one, not of a flat colour), JPEG quality 92,
 * and EXIF orientation 6 ("turn 90° clockwise to view"), so it stands 3000 × 4000 when viewed. A red
 * block sits at the top-left of the stored pixels: once turned upright it is at the top-right.
 */
export async function cameraPhoto12mp(): Promise<Buffer> {
  const W = 4000;
  const H = 3000;
  const raw = Buffer.alloc(W * H * 3);
  let seed = 20_260_417;
  const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32;
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) {
      const i = (y * W + x) * 3;
      if (x < 600 && y < 600) {
        raw[i] = 230;
        raw[i + 1] = 20;
        raw[i + 2] = 20;
        continue;
      }
      const base = 90 + 60 * Math.sin(x / 310) * Math.cos(y / 230);
      raw[i] = Math.max(0, Math.min(255, base + 30 + rnd() * 24));
      raw[i + 1] = Math.max(0, Math.min(255, base + rnd() * 24));
      raw[i + 2] = Math.max(0, Math.min(255, base - 20 + rnd() * 24));
    }
  }
  return sharp(raw, { raw: { width: W, height: H, channels: 3 } })
    .jpeg({ quality: 92 })
    .withMetadata({ orientation: 6 })
    .toBuffer();
}

/** Mean colour of a region of an image (after its EXIF orientation is applied). */
export async function meanColour(image: Buffer, region: { left: number; top: number; width: number; height: number }) {
  // stats() reads its input, not the pipeline: turn and cut first, then measure the piece.
  const piece = await sharp(image).autoOrient().extract(region).png().toBuffer();
  const stats = await sharp(piece).stats();
  const [r, g, b] = stats.channels.map((c) => Math.round(c.mean));
  return { r: r!, g: g!, b: b! };
}

/** On a slab's logging screen: places a defect on the inner face and fills type, severity and disposition. */
export async function fillDefect(page: Page, alongFraction = 0.4) {
  const strip = page.locator('[data-face-strip="inner"]');
  const box = (await strip.boundingBox())!;
  await page.mouse.click(box.x + box.width * alongFraction, box.y + box.height * 0.5);
  await page.getByTestId("placement-mark").waitFor();
  await page.getByRole("searchbox", { name: "Defect type" }).fill("slag");
  await page.getByRole("radio", { name: /SLG/ }).click();
  await page.getByRole("radio", { name: "Major (3)" }).click();
  await page.getByRole("radio", { name: "Condition by scarfing" }).click();
}

/** Opens a slab's logging screen from the yard's finder, as the inspector does. */
export async function openSlabFromYard(page: Page, slabId: string) {
  await page.getByLabel(/Slab id or heat number/).fill(slabId);
  await page.keyboard.press("Enter");
  await page.waitForURL(new RegExp(`/yard/slabs/${slabId}$`));
  await page.getByRole("heading", { level: 1, name: `Slab ${slabId}` }).waitFor();
}
