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
import { pipeline } from "node:stream/promises";
import pLimit from "p-limit";
import type sharp from "sharp";
import { loadFileType, loadSharp } from "../lib/lazy-packages";
import { figure, HttpError, said } from "../lib/http-error";
import { storeError } from "../middleware/uploads";

export const PHOTO_MAX_PIXELS = 50_000_000; // 50 MP: every tablet and phone camera fits, a bomb does not
export const DISPLAY_MAX_PX = 2048;
export const THUMB_MAX_PX = 320;
/**
 * Photos decoded at once. A decode holds one of libuv's four threads for seconds on a large photo;
 * two leave the others to the file system, multer's writes and the sign-in's crypto, so the rest
 * of the plant keeps working while the yard sends photos.
 */
export const PHOTO_DECODE_CONCURRENCY = 2;
/**
 * Photos waiting for a decode beyond which the server answers 503 "busy" (the tablet's outbox
 * retries): four full sends of ten wait; a fifth is told to come back. Waiting photos are files on
 * disk, not memory.
 */
export const PHOTO_DECODE_QUEUE_MAX = 40;
const ACCEPTED = new Set(["image/jpeg", "image/png", "image/webp", "image/avif"]);
/** A file younger than this may belong to an upload still being saved: the cleanup leaves it. */
const ORPHAN_GRACE_MS = 10 * 60_000;

/** The photo bytes in memory (seed, benchmarks) or the path of the uploaded file. */
export type PhotoInput = Buffer | string;

export interface CheckedPhoto {
  input: PhotoInput;
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

// p-limit (a well-kept package) rather than our own queue: it counts active and waiting jobs, which
// is all the admission check below needs.
const decodeQueue = pLimit(PHOTO_DECODE_CONCURRENCY);

/** Photos being decoded and waiting, now (the tests read it to know where an upload is). */
export function photoDecodeState() {
  return { active: decodeQueue.activeCount, waiting: decodeQueue.pendingCount };
}

/** 503 when `count` more photos would not fit in the decode queue: said before anything is stored. */
export function admitPhotoDecodes(count: number) {
  if (decodeQueue.pendingCount + count > PHOTO_DECODE_QUEUE_MAX) {
    throw new HttpError(503, "busy", said("photos.busy"), {
      retryAfterSeconds: 30,
    });
  }
}

/** Content sniffing and header checks only (no full decode): fast, and safe against bombs. */
export async function checkPhoto(input: PhotoInput, originalName: string): Promise<CheckedPhoto> {
  const { fileTypeFromBuffer, fileTypeFromFile } = await loadFileType();
  const type = typeof input === "string" ? await fileTypeFromFile(input) : await fileTypeFromBuffer(input);
  const name = originalName.slice(0, 120);
  if (type && (type.mime === "image/heic" || type.mime === "image/heif" || type.ext === "heic")) {
    throw new HttpError(415, "heic_not_supported", said("photos.heic", { name }));
  }
  if (!type || !ACCEPTED.has(type.mime)) {
    throw new HttpError(415, "not_an_image", said("photos.notAnImage", { name }));
  }
  let meta: Awaited<ReturnType<ReturnType<typeof sharp>["metadata"]>>;
  try {
    meta = await (await loadSharp())(input, { limitInputPixels: false }).metadata();
  } catch {
    throw new HttpError(415, "not_an_image", said("photos.unreadable", { name }));
  }
  const w = meta.width ?? 0;
  const h = meta.height ?? 0;
  if (!w || !h) throw new HttpError(415, "not_an_image", said("photos.unreadable", { name }));
  if (w * h > PHOTO_MAX_PIXELS) {
    throw new HttpError(
      413,
      "too_many_pixels",
      said("photos.tooManyPixels", { name, w, h, mp: figure((w * h) / 1e6, { digits: 0 }), limit: PHOTO_MAX_PIXELS / 1e6 }),
    );
  }
  return { input, originalName: name, mime: type.mime, width: w, height: h };
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

async function sha256Of(input: PhotoInput): Promise<string> {
  const hash = crypto.createHash("sha256");
  if (typeof input === "string") await pipeline(fs.createReadStream(input), hash);
  else hash.update(input);
  return hash.digest("hex");
}

/**
 * Decodes once (through the bounded queue) to the display size, encodes the display WebP and the
 * thumbnail from that, writes both, and returns what the row needs. A store that cannot be written
 * answers 503 (see storeError).
 */
export function storePhotoFiles(uploadDir: string, photo: CheckedPhoto): Promise<StoredPhotoFiles> {
  return decodeQueue(() => storeNow(uploadDir, photo));
}

async function storeNow(uploadDir: string, photo: CheckedPhoto): Promise<StoredPhotoFiles> {
  const id = crypto.randomUUID();
  const p = photoPaths(uploadDir, id);
  try {
    await fs.promises.mkdir(p.dir, { recursive: true });
  } catch (err) {
    throw storeError(err, "photo");
  }
  let display: { data: Buffer; info: { width: number; height: number } };
  let thumb: Buffer;
  try {
    // One full decode (the costly part), then both sizes from the ≤ 2048 px pixels, one step at a
    // time, so a photo holds one of libuv's threads, never two.
    const sharp = await loadSharp();
    const { data, info } = await sharp(photo.input, { limitInputPixels: PHOTO_MAX_PIXELS, failOn: "error" })
      .autoOrient()
      .resize({ width: DISPLAY_MAX_PX, height: DISPLAY_MAX_PX, fit: "inside", withoutEnlargement: true })
      .raw()
      .toBuffer({ resolveWithObject: true });
    const pixels = () => sharp(data, { raw: { width: info.width, height: info.height, channels: info.channels } });
    display = await pixels().webp({ quality: 82 }).toBuffer({ resolveWithObject: true });
    thumb = await pixels()
      .resize({ width: THUMB_MAX_PX, height: THUMB_MAX_PX, fit: "inside", withoutEnlargement: true })
      .jpeg({ quality: 78, mozjpeg: true })
      .toBuffer();
  } catch {
    throw new HttpError(415, "not_an_image", said("photos.undecodable", { name: photo.originalName }));
  }
  try {
    await writeAtomically(p.display, display.data);
    await writeAtomically(p.thumb, thumb);
  } catch (err) {
    await fs.promises.rm(p.display, { force: true }).catch(() => undefined);
    throw storeError(err, "photo");
  }
  return {
    id,
    displayFile: path.relative(uploadDir, p.display),
    displayMime: "image/webp",
    thumbFile: path.relative(uploadDir, p.thumb),
    width: display.info.width,
    height: display.info.height,
    bytes: display.data.length,
    sha256: await sha256Of(photo.input),
  };
}

export async function removePhotoFiles(uploadDir: string, files: StoredPhotoFiles[]) {
  for (const f of files) {
    for (const rel of [f.displayFile, f.thumbFile]) await fs.promises.rm(path.join(uploadDir, rel), { force: true });
  }
}

/**
 * Removes photo files that have no row (and left-over .tmp files). A file younger than the grace
 * period may be an upload still between its file and its row, so it stays — unless `writtenBefore`
 * says which files cannot be in flight (at start-up: everything written before this process began).
 */
export async function cleanupOrphanFiles(
  uploadDir: string,
  knownFiles: (relativePath: string) => boolean,
  now = Date.now(),
  writtenBefore?: number,
): Promise<string[]> {
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
