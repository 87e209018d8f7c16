import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import bwipjs from "bwip-js/node";
import sharp from "sharp";

export type LabelCode = "code128" | "qrcode" | "datamatrix";

/**
 * A slab label as the camera sees it: the barcode (drawn by bwip-js, a well-kept generator) on a
 * white label with the id printed under it, on a darker slab-coloured background.
 */
export async function labelImage(code: LabelCode, text: string, width = 1280, height = 720): Promise<Buffer> {
  const common = { text, paddingwidth: 12, paddingheight: 12, backgroundcolor: "FFFFFF" };
  const barcode = await bwipjs.toBuffer(
    code === "code128" ? { ...common, bcid: code, scale: 3, height: 18, includetext: true, textxalign: "center" } : { ...common, bcid: code, scale: 6 },
  );
  const meta = await sharp(barcode).metadata();
  const labelW = meta.width! + 40;
  const labelH = meta.height! + 40;
  const label = await sharp({ create: { width: labelW, height: labelH, channels: 3, background: "#ffffff" } })
    .composite([{ input: barcode, left: 20, top: 20 }])
    .png()
    .toBuffer();
  return sharp({ create: { width, height, channels: 3, background: "#5d5750" } })
    .composite([{ input: label, left: Math.round((width - labelW) / 2), top: Math.round((height - labelH) / 2) }])
    .png()
    .toBuffer();
}

/**
 * Writes `image` as a Y4M video Chromium's fake camera plays in a loop
 * (`--use-file-for-fake-video-capture=<file>`). Our own few lines because the format is only a text
 * header and raw planes: "YUV4MPEG2 W H F30:1 Ip A1:1 C420jpeg", then per frame "FRAME" and the
 * Y plane (full size) followed by the U and V planes (half size each way); grey U and V = 128.
 */
export async function writeY4m(image: Buffer, frames = 2): Promise<string> {
  const { data, info } = await sharp(image).greyscale().toColourspace("b-w").raw().toBuffer({ resolveWithObject: true });
  if (info.channels !== 1) throw new Error(`expected one grey channel, got ${info.channels}`);
  const w = info.width - (info.width % 2);
  const h = info.height - (info.height % 2);
  const y = Buffer.alloc(w * h);
  for (let row = 0; row < h; row++) data.copy(y, row * w, row * info.width, row * info.width + w);
  const chroma = Buffer.alloc((w / 2) * (h / 2) * 2, 128);
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-camera-"));
  const file = path.join(dir, "camera.y4m");
  const parts: Buffer[] = [Buffer.from(`YUV4MPEG2 W${w} H${h} F30:1 Ip A1:1 C420jpeg\n`)];
  for (let i = 0; i < frames; i++) parts.push(Buffer.from("FRAME\n"), y, chroma);
  fs.writeFileSync(file, Buffer.concat(parts));
  return file;
}

/** Chromium's flags for a fake camera playing `y4m`, with the permission prompt answered "allow". */
export function fakeCameraArgs(y4m: string): string[] {
  return ["--use-fake-ui-for-media-stream", "--use-fake-device-for-media-stream", `--use-file-for-fake-video-capture=${y4m}`];
}
