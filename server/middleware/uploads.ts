/**
 * Multipart uploads, bounded: the files are streamed to a temporary folder (never held in memory),
 * their names are read as UTF-8, each user has at most a few uploads in flight, and the temporary
 * files are removed when the answer has gone out or the client went away, whatever happened.
 *
 * The temporary folder is the system's (os.tmpdir()/strandsight-incoming), not UPLOAD_DIR: a file
 * waiting there is not yet a photo or an attachment, and the photo and attachment stores only ever
 * receive what was checked. Each file is named "<process id>-<random>.part": the first upload of a
 * process removes what a process that is gone (a crash, a SIGKILL) left there.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Request, RequestHandler, Response } from "express";
import multer from "multer";
import { HttpError, said } from "../lib/http-error";

export const INCOMING_DIR = path.join(os.tmpdir(), "strandsight-incoming");
/** Uploads one person may have in flight at once; the next is refused (429) before its body is read. */
export const UPLOADS_PER_USER = 3;
/** A temporary file older than this cannot belong to a request still running (the sweep removes it). */
const STALE_INCOMING_MS = 6 * 60 * 60_000;

export interface DiskUploadOptions {
  /** The form field that carries the file(s). */
  field: string;
  /** Most files in one request (with `multiple: false`, 1). */
  maxFiles: number;
  /** Most bytes in one file. */
  maxBytes: number;
  /** true: the files arrive as `req.files` (an array); false (the default): one file as `req.file`. */
  multiple?: boolean;
  /** Most text fields besides the files (default 5). */
  maxFields?: number;
}

/** What a route handler reads from `req.file` / `req.files` after `diskUpload`. */
export interface IncomingFile {
  fieldname: string;
  /** The name the client gave, decoded as UTF-8 (untrusted: never a path). */
  originalname: string;
  /** Absolute path of the temporary copy; removed after the response. */
  path: string;
  size: number;
  mimetype: string;
}

const STORE_ERRORS = new Set(["EACCES", "EPERM", "EROFS", "ENOSPC", "EDQUOT", "ENOTDIR", "EEXIST", "EISDIR", "EMFILE", "ENFILE"]);

/**
 * A file system refusal while writing to a store (read-only folder, full disk, wrong permissions)
 * is the server's state, not the user's mistake: 503 in words, with the cause kept for the log.
 * Anything else is passed on unchanged.
 */
export function storeError(err: unknown, store: "photo" | "attachment" | "upload"): unknown {
  const code = (err as NodeJS.ErrnoException | undefined)?.code;
  if (!code || !STORE_ERRORS.has(code)) return err;
  const full = code === "ENOSPC" || code === "EDQUOT";
  const e = new HttpError(503, "store_unwritable", said(`uploads.unwritable.${store}${full ? "Full" : ""}`), { store });
  (e as Error & { cause?: unknown }).cause = err;
  return e;
}

let incomingReady: Promise<void> | null = null;

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === "EPERM"; // someone else's process: alive
  }
}

/** Removes files left by processes that are gone, and any older than a request can live. */
export async function sweepIncoming(now = Date.now()): Promise<number> {
  const cutoff = now - STALE_INCOMING_MS;
  let removed = 0;
  for (const name of await fs.promises.readdir(INCOMING_DIR).catch(() => [] as string[])) {
    const full = path.join(INCOMING_DIR, name);
    const st = await fs.promises.stat(full).catch(() => null);
    if (!st?.isFile()) continue;
    const pid = Number(name.split("-")[0]);
    const orphan = Number.isInteger(pid) && pid > 0 && pid !== process.pid && !processAlive(pid);
    if (orphan || st.mtimeMs < cutoff) {
      await fs.promises.rm(full, { force: true }).catch(() => undefined);
      removed++;
    }
  }
  return removed;
}

/** Creates the temporary folder once and sweeps it then and every hour after. */
function ensureIncoming(): Promise<void> {
  incomingReady ??= (async () => {
    await fs.promises.mkdir(INCOMING_DIR, { recursive: true, mode: 0o700 });
    await sweepIncoming();
    setInterval(() => void sweepIncoming(), 60 * 60_000).unref();
  })().catch((err) => {
    incomingReady = null; // try again on the next upload (the folder may be fixed meanwhile)
    throw err;
  });
  return incomingReady;
}

const storage = multer.diskStorage({
  destination: (_req, _file, cb) => {
    ensureIncoming().then(
      () => cb(null, INCOMING_DIR),
      (err) => cb(err as Error, ""),
    );
  },
  filename: (_req, _file, cb) => cb(null, `${process.pid}-${crypto.randomBytes(12).toString("hex")}.part`),
});

function filesOf(req: Request): Express.Multer.File[] {
  const out: Express.Multer.File[] = [];
  if (req.file) out.push(req.file);
  if (Array.isArray(req.files)) out.push(...req.files);
  else if (req.files) for (const list of Object.values(req.files)) out.push(...list);
  return out;
}

const mb = (bytes: number) => `${Math.round(bytes / (1024 * 1024))} MB`;

/** multer's and busboy's errors, in words; file system errors on the temporary folder become 503. */
function readable(err: unknown, opts: DiskUploadOptions): unknown {
  if (err instanceof HttpError) return err;
  const e = err as { code?: string; field?: string; message?: string; status?: number };
  switch (e.code) {
    case "LIMIT_FILE_SIZE":
      return new HttpError(413, "too_large", said("uploads.fileTooLarge", { size: mb(opts.maxBytes) }), {
        field: e.field,
        maxBytes: opts.maxBytes,
      });
    case "LIMIT_FILE_COUNT":
      return new HttpError(400, "too_many_files", said("uploads.tooManyFiles", { count: opts.maxFiles }), {
        field: opts.field,
        maxFiles: opts.maxFiles,
      });
    case "LIMIT_UNEXPECTED_FILE":
      return e.field === opts.field
        ? new HttpError(400, "too_many_files", said("uploads.tooManyFiles", { count: opts.maxFiles }), {
            field: opts.field,
            maxFiles: opts.maxFiles,
          })
        : new HttpError(400, "unexpected_field", said("uploads.unexpectedField", { field: opts.field }), { field: e.field ?? null });
    case "LIMIT_PART_COUNT":
    case "LIMIT_FIELD_COUNT":
    case "LIMIT_FIELD_KEY":
    case "LIMIT_FIELD_VALUE":
    case "LIMIT_FIELD_NESTING":
    case "LIMIT_FIELD_ARRAY_INDEX":
    case "MISSING_FIELD_NAME":
    case "INVALID_FIELD_NAME":
      return new HttpError(400, "upload_rejected", said("uploads.formFields"), {
        field: e.field ?? null,
      });
  }
  const stored = storeError(err, "upload");
  if (stored !== err) return stored;
  if (typeof e.status === "number") return err;
  // busboy's own errors (a form that ends early, no boundary) and a client that went away.
  return new HttpError(400, "upload_unreadable", said("uploads.unreadable"));
}

/**
 * Streams the multipart files of one field to the temporary folder. The handler after it reads
 * `req.file` (or `req.files` with `multiple`) as {@link IncomingFile}s: `originalname` decoded as
 * UTF-8, `path` absolute. The files are removed when the response has finished or the connection
 * closed, and none is left behind on a refusal (multer removes what it wrote when it fails).
 */
export function diskUpload(opts: DiskUploadOptions): RequestHandler {
  const maxFiles = opts.multiple ? opts.maxFiles : 1;
  const maxFields = opts.maxFields ?? 5;
  const upload = multer({
    storage,
    // Browsers and curl send the file name as raw UTF-8 bytes; busboy would read them as latin1.
    defParamCharset: "utf8",
    limits: { fileSize: opts.maxBytes, files: maxFiles, fields: maxFields, parts: maxFiles + maxFields, fieldSize: 64 * 1024, headerPairs: 50 },
  });
  const middleware = opts.multiple ? upload.array(opts.field, maxFiles) : upload.single(opts.field);
  return (req, res, next) => {
    let gone = false;
    const removeFiles = () => {
      for (const f of filesOf(req)) if (f.path) fs.rm(f.path, { force: true }, () => undefined);
    };
    // After the answer (or when the client goes away): the files go, whatever happened.
    res.once("close", () => {
      gone = true;
      removeFiles();
    });
    middleware(req, res, (err?: unknown) => {
      // The client went away while its files arrived: they go now, and the request stops here.
      if (gone || res.destroyed || req.socket.destroyed) {
        removeFiles();
        return;
      }
      if (!err || err === "route" || err === "router") return next(err as never);
      next(readable(err, { ...opts, maxFiles }));
    });
  };
}

// ------------------------------------------------------------------------------------------------
// Uploads in flight per person
// ------------------------------------------------------------------------------------------------

const inFlight = new Map<string, number>();

/** How many uploads this user has running now (the tests read it to know a request got past its checks). */
export function uploadsInFlight(userId: string): number {
  return inFlight.get(userId) ?? 0;
}

/**
 * Takes one of the user's upload slots for the life of this response, or refuses with 429 when all
 * are taken. Called before the body is read, so a refused upload costs nothing. In memory, like the
 * sign-in limits: one server process serves the plant.
 */
export function takeUploadSlot(userId: string, res: Response) {
  // A connection that closed while its session was looked up would never give the slot back.
  if (res.closed || res.destroyed || res.req.socket.destroyed) {
    throw new HttpError(400, "upload_unreadable", said("uploads.closedEarly"));
  }
  const n = inFlight.get(userId) ?? 0;
  if (n >= UPLOADS_PER_USER) {
    res.setHeader("Retry-After", "10");
    throw new HttpError(429, "too_many_uploads", said("uploads.tooManyInFlight", { n: UPLOADS_PER_USER }), { maxInFlight: UPLOADS_PER_USER });
  }
  inFlight.set(userId, n + 1);
  res.once("close", () => {
    const left = (inFlight.get(userId) ?? 1) - 1;
    if (left > 0) inFlight.set(userId, left);
    else inFlight.delete(userId);
  });
}
