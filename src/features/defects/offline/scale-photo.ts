/**
 * Makes a camera photo smaller on the tablet before it goes into the outbox, so the yard's weak
 * Wi-Fi carries about a fifth of the bytes. The server's pipeline is unchanged: it still checks,
 * orients and resizes whatever arrives.
 *
 * Our own few lines rather than a package: the browser's own decoder (createImageBitmap, which also
 * applies the EXIF orientation to the pixels) and encoder (canvas.toBlob) do the work; an
 * image-compression package would wrap the same two calls and add to the yard's script budget.
 */

/** Long edge sent from the tablet: above the server's 2,048 px display size, so nothing is lost there. */
export const SCALE_LONG_EDGE_PX = 2560;
export const SCALE_JPEG_QUALITY = 0.85;
/** Only these are redrawn; WebP and anything else go as they are. */
const SCALABLE = new Set(["image/jpeg", "image/png"]);
/**
 * Bounds before decoding: a bitmap of this many pixels takes 4 bytes each in the tablet's memory
 * (64 MP ≈ 256 MB). Larger ones go as they are and the server decides (its limit is 50 MP).
 */
const SCALE_MAX_PIXELS = 64_000_000;
const SCALE_MAX_INPUT_BYTES = 80 * 1024 * 1024;
/** A decode that hangs must not hold the photo back: after this the original is kept. */
const SCALE_TIMEOUT_MS = 20_000;

export interface ScaledPhoto {
  /** The file to send: the smaller JPEG, or the original. */
  file: File;
  scaled: boolean;
  /** Why the original was kept (for the record; the inspector needs no action). */
  kept?: "small" | "type" | "too-large-to-decode" | "no-gain" | "failed";
  width?: number;
  height?: number;
}

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T> {
  return new Promise((resolve, reject) => {
    const t = setTimeout(() => reject(new Error("timed out")), ms);
    p.then(
      (v) => (clearTimeout(t), resolve(v)),
      (e) => (clearTimeout(t), reject(e)),
    );
  });
}

/** Width and height from the file's header: an <img> reads them on load without a full decode. */
function headerSize(file: File): Promise<{ width: number; height: number }> {
  return new Promise((resolve, reject) => {
    const url = URL.createObjectURL(file);
    const img = new Image();
    img.onload = () => {
      URL.revokeObjectURL(url);
      resolve({ width: img.naturalWidth, height: img.naturalHeight });
    };
    img.onerror = () => {
      URL.revokeObjectURL(url);
      reject(new Error("not readable"));
    };
    img.src = url;
  });
}

function jpegName(name: string): string {
  const base = (name || "photo").replace(/\.[^.]{1,5}$/, "");
  return `${base}.jpg`;
}

async function scale(file: File): Promise<ScaledPhoto> {
  const header = await headerSize(file);
  if (Math.max(header.width, header.height) <= SCALE_LONG_EDGE_PX) return { file, scaled: false, kept: "small" };
  if (header.width * header.height > SCALE_MAX_PIXELS) return { file, scaled: false, kept: "too-large-to-decode" };

  // "from-image": the EXIF orientation is applied to the pixels, so the photo stands as the camera
  // saw it once the metadata is gone (the canvas writes none).
  const bitmap = await createImageBitmap(file, { imageOrientation: "from-image" });
  const canvas = document.createElement("canvas");
  try {
    const ratio = SCALE_LONG_EDGE_PX / Math.max(bitmap.width, bitmap.height);
    canvas.width = Math.round(bitmap.width * ratio);
    canvas.height = Math.round(bitmap.height * ratio);
    const ctx = canvas.getContext("2d", { alpha: false });
    if (!ctx) throw new Error("no canvas");
    // A transparent PNG becomes JPEG on white, not on black.
    ctx.fillStyle = "#ffffff";
    ctx.fillRect(0, 0, canvas.width, canvas.height);
    ctx.imageSmoothingEnabled = true;
    ctx.imageSmoothingQuality = "high";
    ctx.drawImage(bitmap, 0, 0, canvas.width, canvas.height);
    const blob = await new Promise<Blob | null>((resolve) => canvas.toBlob(resolve, "image/jpeg", SCALE_JPEG_QUALITY));
    if (!blob || blob.size === 0) throw new Error("not encoded");
    if (blob.size >= file.size) return { file, scaled: false, kept: "no-gain" };
    return {
      file: new File([blob], jpegName(file.name), { type: "image/jpeg", lastModified: file.lastModified }),
      scaled: true,
      width: canvas.width,
      height: canvas.height,
    };
  } finally {
    bitmap.close();
    // Frees the pixels at once (Safari keeps a canvas's memory until it is resized).
    canvas.width = 0;
    canvas.height = 0;
  }
}

/**
 * The photo to keep with the entry: long edge 2,560 px, JPEG quality 0.85, standing upright. Small
 * photos, WebP and anything that cannot be read or redrawn stay as they were: a photo is never lost
 * to the scaling.
 */
export async function scalePhotoForUpload(file: File): Promise<ScaledPhoto> {
  if (!SCALABLE.has(file.type)) return { file, scaled: false, kept: "type" };
  if (file.size > SCALE_MAX_INPUT_BYTES) return { file, scaled: false, kept: "too-large-to-decode" };
  try {
    return await withTimeout(scale(file), SCALE_TIMEOUT_MS);
  } catch {
    return { file, scaled: false, kept: "failed" };
  }
}
