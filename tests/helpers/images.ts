import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import CRC32 from "crc-32";
import sharp from "sharp";

/**
 * A camera-like JPEG: left half red, right half blue, with EXIF orientation 6 (rotate 90° clockwise
 * to view) and GPS coordinates, written by exiftool — the real tool, not our code.
 */
export async function jpegWithOrientationAndGps(width = 600, height = 400): Promise<Buffer> {
  const half = Math.floor(width / 2);
  const raw = Buffer.alloc(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 3;
      if (x < half) raw[i] = 220;
      else raw[i + 2] = 220;
    }
  }
  const jpeg = await sharp(raw, { raw: { width, height, channels: 3 } })
    .jpeg({ quality: 90 })
    .toBuffer();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-img-"));
  const file = path.join(dir, "camera.jpg");
  fs.writeFileSync(file, jpeg);
  execFileSync("exiftool", [
    "-q",
    "-n",
    "-overwrite_original",
    "-Orientation=6",
    "-GPSLatitude=59.3293",
    "-GPSLatitudeRef=N",
    "-GPSLongitude=18.0686",
    "-GPSLongitudeRef=E",
    "-Make=DemoCam",
    file,
  ]);
  const out = fs.readFileSync(file);
  fs.rmSync(dir, { recursive: true, force: true });
  return out;
}

/** What exiftool reads from an image (all groups, numeric values). */
export function exifTags(buffer: Buffer): Record<string, unknown> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-exif-"));
  const file = path.join(dir, "img");
  fs.writeFileSync(file, buffer);
  const json = execFileSync("exiftool", ["-json", "-n", "-G", file], { encoding: "utf8" });
  fs.rmSync(dir, { recursive: true, force: true });
  return (JSON.parse(json) as Record<string, unknown>[])[0]!;
}

/**
 * A tiny PNG whose header claims width × height pixels: a decompression bomb as attackers build them
 * (the header is patched and its CRC recomputed), a few hundred bytes on disk.
 */
export async function pngBomb(width = 30_000, height = 30_000): Promise<Buffer> {
  const png = await sharp({ create: { width: 8, height: 8, channels: 3, background: "#000" } })
    .png()
    .toBuffer();
  const out = Buffer.from(png);
  // Signature (8) + IHDR length (4) + "IHDR" (4): width and height follow, then the CRC over type+data.
  out.writeUInt32BE(width, 16);
  out.writeUInt32BE(height, 20);
  out.writeInt32BE(CRC32.buf(out.subarray(12, 29)), 29);
  return out;
}

/** A minimal HEIC container header (ftyp box with the heic brand), as iPhones write. */
export function heicHeader(): Buffer {
  const ftyp = Buffer.concat([Buffer.from([0, 0, 0, 24]), Buffer.from("ftypheic"), Buffer.from([0, 0, 0, 0]), Buffer.from("mif1heic")]);
  return Buffer.concat([ftyp, Buffer.alloc(2048, 0)]);
}
