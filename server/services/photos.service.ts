/**
 * The photo pipeline. An upload is accepted only when its content is JPEG, PNG, WebP or AVIF (never
 * judged by name or MIME type); HEIC is refused with a message saying so, because the prebuilt
 * libvips here decodes HEIF only as AVIF. Pixel and byte limits stop decompression bombs. Each photo
 * is stored as a display version (≤ 2048 px, WebP) and a JPEG thumbnail (≈ 320 px, the size workbooks
 * embed), with the EXIF orientation applied and every piece of metadata — GPS above all — dropped
 * (sharp writes none unless asked). Files are named by generated ids.
 *
 * Crash safety: files are written first (to a temporary name, then renamed into place), the rows
 * after; a crash in between leaves files without rows, which `cleanupOrphanFiles` removes.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { fileTypeFromBuffer } from "file-type";
import { HttpError } from "../lib/http-error";

export const PHOTO_MAX_PIXELS = 50_000_000; // 50 MP: every tablet and phone camera fits, a bomb does not
export const DISPLAY_MAX_PX = 2048;
export const THUMB_MAX_PX = 320;
const ACCEPTED = new Set(["image/jpeg", "image/png", "image/webp", "image/avif"]);
/** A file younger than this may belong to an upload still being saved: the cleanup leaves it. */
const ORPHAN_GRACE_MS = 10 * 60_000;

export interface CheckedPhoto {
  buffer: Buffer;
  originalName: string;
  mime: string;
  width: number;
  height: number;
}

export interface StoredPhotoFiles {
  id: string;
  displayFile: string;
  displayMime: string;
  thumbFile: string;
  width: number;
  height: number;
  bytes: number;
  sha256: string;
}

/** Content sniffing and header checks only (no full decode): fast, and safe against bombs. */
export async function checkPhoto(buffer: Buffer, originalName: string): Promise<CheckedPhoto> {
  const type = await fileTypeFromBuffer(buffer);
  const name = originalName.slice(0, 120);
  if (type && (type.mime === "image/heic" || type.mime === "image/heif" || type.ext === "heic")) {
    throw new HttpError(
      415,
      "heic_not_supported",
      `${name} is a HEIC photo, which cannot be read here. Take the photo with the camera button in Strandsight (it sends JPEG), or set the camera to "Most compatible" / JPEG.`,
    );
  }
  if (!type || !ACCEPTED.has(type.mime)) {
    throw new HttpError(415, "not_an_image", `${name} is not a photo Strandsight can store. Use JPEG, PNG, WebP or AVIF.`);
  }
  let meta: Awaited<ReturnType<ReturnType<typeof sharp>["metadata"]>>;
  try {
    meta = await sharp(buffer, { limitInputPixels: false }).metadata();
  } catch {
    throw new HttpError(415, "not_an_image", `${name} could not be read as an image; it may be damaged.`);
  }
  const w = meta.width ?? 0;
  const h = meta.height ?? 0;
  if (!w || !h) throw new HttpError(415, "not_an_image", `${name} could not be read as an image; it may be damaged.`);
  if (w * h > PHOTO_MAX_PIXELS) {
    throw new HttpError(
      413,
      "too_many_pixels",
      `${name} is ${w} × ${h} pixels (${((w * h) / 1e6).toFixed(0)} MP); the limit is ${PHOTO_MAX_PIXELS / 1e6} MP. Take the photo at a lower resolution.`,
    );
  }
  return { buffer, originalName: name, mime: type.mime, width: w, height: h };
}

/** Where a photo's files live: UPLOAD_DIR/photos/<first two chars of the id>/<id>.<kind>. */
export function photoPaths(uploadDir: string, id: string) {
  const dir = path.join(uploadDir, "photos", id.slice(0, 2));
  return { dir, display: path.join(dir, `${id}.webp`), thumb: path.join(dir, `${id}.thumb.jpg`) };
}

async function writeAtomically(file: string, data: Buffer) {
  const tmp = `${file}.${process.pid}.${crypto.randomBytes(4).toString("hex")}.tmp`;
  await fs.promises.writeFile(tmp, data, { flag: "wx" });
  await fs.promises.rename(tmp, file);
}

/** Decodes once, writes both sizes, returns what the row needs. */
export async function storePhotoFiles(uploadDir: string, photo: CheckedPhoto): Promise<StoredPhotoFiles> {
  const id = crypto.randomUUID();
  const p = photoPaths(uploadDir, id);
  await fs.promises.mkdir(p.dir, { recursive: true });
  const base = sharp(photo.buffer, { limitInputPixels: PHOTO_MAX_PIXELS, failOn: "error" }).autoOrient();
  let display: { data: Buffer; info: { width: number; height: number } };
  let thumb: Buffer;
  try {
    [display, thumb] = await Promise.all([
      base.clone().resize({ width: DISPLAY_MAX_PX, height: DISPLAY_MAX_PX, fit: "inside", withoutEnlargement: true }).webp({ quality: 82 }).toBuffer({ resolveWithObject: true }),
      base.clone().resize({ width: THUMB_MAX_PX, height: THUMB_MAX_PX, fit: "inside", withoutEnlargement: true }).jpeg({ quality: 78, mozjpeg: true }).toBuffer(),
    ]);
  } catch {
    throw new HttpError(415, "not_an_image", `${photo.originalName} could not be decoded; it may be damaged or truncated.`);
  }
  await writeAtomically(p.display, display.data);
  await writeAtomically(p.thumb, thumb);
  return {
    id,
    displayFile: path.relative(uploadDir, p.display),
    displayMime: "image/webp",
    thumbFile: path.relative(uploadDir, p.thumb),
    width: display.info.width,
    height: display.info.height,
    bytes: display.data.length,
    sha256: crypto.createHash("sha256").update(photo.buffer).digest("hex"),
  };
}

export async function removePhotoFiles(uploadDir: string, files: StoredPhotoFiles[]) {
  for (const f of files) {
    for (const rel of [f.displayFile, f.thumbFile]) await fs.promises.rm(path.join(uploadDir, rel), { force: true });
  }
}

/**
 * Removes photo files that no row refers to (a crash between file and row, or an upload that failed
 * after its files were written) and stale temporary files. Files younger than ten minutes are left
 * alone: they may belong to an upload in flight.
 */
/**
 * Removes photo files that have no row (and left-over .tmp files). A file younger than the grace
 * period may be an upload still between its file and its row, so it stays — unless `writtenBefore`
 * says which files cannot be in flight (at start-up: everything written before this process began).
 */
export async function cleanupOrphanFiles(uploadDir: string, knownFiles: (relativePath: string) => boolean, now = Date.now(), writtenBefore?: number): Promise<string[]> {
  const cutoff = writtenBefore ?? now - ORPHAN_GRACE_MS;
  const root = path.join(uploadDir, "photos");
  const removed: string[] = [];
  let dirs: string[];
  try {
    dirs = await fs.promises.readdir(root);
  } catch {
    return removed;
  }
  for (const d of dirs) {
    const dir = path.join(root, d);
    let files: string[];
    try {
      files = await fs.promises.readdir(dir);
    } catch {
      continue;
    }
    for (const f of files) {
      const full = path.join(dir, f);
      const stat = await fs.promises.stat(full).catch(() => null);
      if (!stat || !stat.isFile() || stat.mtimeMs >= cutoff) continue;
      const rel = path.relative(uploadDir, full);
      if (f.endsWith(".tmp") || !knownFiles(rel)) {
        await fs.promises.rm(full, { force: true });
        removed.push(rel);
      }
    }
  }
  return removed;
}
