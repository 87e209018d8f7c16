/**
 * Files attached to investigations and claims: judged by content, stored under generated ids (file
 * first, then the row, in one transaction with the audit), offered for download under a safe name
 * whose extension is the one of the kind the content was found to be.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { pipeline } from "node:stream/promises";
import type Database from "better-sqlite3";
import type { Db } from "../db/client";
import { badRequest, HttpError, notFound, said } from "../lib/http-error";
import { storeError } from "../middleware/uploads";
import { recordAudit } from "./audit.service";

type Row = Record<string, any>;
interface Actor {
  id: string;
}

export const ATTACHMENT_MAX_BYTES = 20 * 1024 * 1024;
export const ATTACHMENT_MAX_FILES = 5;
/** Files one investigation or claim may hold; a claim file rarely holds more than a few dozen. */
export const ATTACHMENT_MAX_PER_RECORD = 100;
/** Files one person may attach in an hour, so no one fills the disk by accident or on purpose. */
export const ATTACHMENT_MAX_PER_USER_HOUR = 100;

/** How an attachment upload can be refused, for the routes' OpenAPI descriptions (claims and investigations). */
export const ATTACHMENT_UPLOAD_REFUSALS = {
  409: {
    description: `The record already holds ${ATTACHMENT_MAX_PER_RECORD} files (an investigation also: it is closed, even when it was closed while the files arrived).`,
  },
  413: { description: "A file is larger than 20 MB." },
  415: { description: "A kind of file not kept here, or a name that runs as a program or script (.bat, .hta, .svg, .html …)." },
  429: { description: `Three uploads of yours already in progress, or ${ATTACHMENT_MAX_PER_USER_HOUR} files attached by you in the last hour.` },
  503: { description: "The attachment store cannot be written." },
};

/**
 * The caps, checked before the body is read (adding = 0: is there room at all?) and again inside
 * the insert transaction with the files actually sent.
 */
export function checkAttachmentCaps(sqlite: Database.Database, ownerKind: "investigation" | "claim", ownerId: number, userId: string, adding = 0) {
  const held = sqlite.prepare("select count(*) from attachments where owner_kind = ? and owner_id = ?").pluck().get(ownerKind, ownerId) as number;
  if (held + Math.max(adding, 1) > ATTACHMENT_MAX_PER_RECORD) {
    throw new HttpError(
      409,
      "attachment_limit",
      said(ownerKind === "claim" ? "attachments.limitClaim" : "attachments.limitInvestigation", { held, max: ATTACHMENT_MAX_PER_RECORD }),
      {
        held,
        max: ATTACHMENT_MAX_PER_RECORD,
      },
    );
  }
  const lastHour = sqlite
    .prepare("select count(*) from attachments where created_by = ? and created_at >= ?")
    .pluck()
    .get(userId, Date.now() - 3_600_000) as number;
  if (lastHour + Math.max(adding, 1) > ATTACHMENT_MAX_PER_USER_HOUR) {
    throw new HttpError(429, "attachment_rate", said("attachments.rate", { n: lastHour, max: ATTACHMENT_MAX_PER_USER_HOUR }), {
      lastHour,
      max: ATTACHMENT_MAX_PER_USER_HOUR,
      retryAfterSeconds: 600,
    });
  }
}
/** Names of the kinds recognised by their content (ALLOWED, and the spellings of their extensions). */
const CLAIMED_BINARY = /\.(pdf|png|jpe?g|webp|xlsx|docx|pptx)$/i;
/** What an investigation keeps: documents, sheets, photos and plain text (judged by content). */
const ALLOWED = new Map<string, string>([
  ["pdf", "application/pdf"],
  ["png", "image/png"],
  ["jpg", "image/jpeg"],
  ["webp", "image/webp"],
  ["xlsx", "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"],
  ["docx", "application/vnd.openxmlformats-officedocument.wordprocessingml.document"],
  ["pptx", "application/vnd.openxmlformats-officedocument.presentationml.presentation"],
]);
/** Each kind kept, with the extensions its name may end in (the first is the one given when it does not). */
const EXTENSIONS: Record<string, string[]> = {
  "application/pdf": ["pdf"],
  "image/png": ["png"],
  "image/jpeg": ["jpg", "jpeg"],
  "image/webp": ["webp"],
  "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet": ["xlsx"],
  "application/vnd.openxmlformats-officedocument.wordprocessingml.document": ["docx"],
  "application/vnd.openxmlformats-officedocument.presentationml.presentation": ["pptx"],
  "text/csv": ["csv"],
  "text/plain": ["txt"],
};
const KNOWN_EXTENSIONS = new Set(Object.values(EXTENSIONS).flat());
/**
 * Names that run, open a browser page or change the system when double-clicked, whatever the
 * content (a text file named .bat or .hta is a program; .svg and .html run script in a browser).
 */
const ACTIVE_EXTENSIONS = new Set([
  "bat",
  "cmd",
  "com",
  "exe",
  "msi",
  "msp",
  "mst",
  "scr",
  "pif",
  "cpl",
  "dll",
  "sys",
  "drv",
  "ocx",
  "hta",
  "js",
  "jse",
  "mjs",
  "cjs",
  "vb",
  "vbs",
  "vbe",
  "wsf",
  "wsh",
  "ws",
  "wsc",
  "sct",
  "ps1",
  "ps1xml",
  "ps2",
  "psc1",
  "psd1",
  "psm1",
  "msh",
  "msh1",
  "msh2",
  "sh",
  "bash",
  "zsh",
  "ksh",
  "csh",
  "command",
  "tool",
  "app",
  "jar",
  "jnlp",
  "class",
  "lnk",
  "url",
  "website",
  "scf",
  "inf",
  "ins",
  "reg",
  "application",
  "appref-ms",
  "gadget",
  "msc",
  "chm",
  "hlp",
  "svg",
  "svgz",
  "htm",
  "html",
  "xhtml",
  "shtml",
  "xht",
  "xml",
  "xsl",
  "xslt",
  "mht",
  "mhtml",
  "php",
  "asp",
  "aspx",
  "jsp",
  "py",
  "pyw",
  "pl",
  "rb",
  "desktop",
  "settingcontent-ms",
  "library-ms",
  "search-ms",
  "iso",
  "img",
  "vhd",
  "vhdx",
  "docm",
  "xlsm",
  "pptm",
  "dotm",
  "xltm",
  "potm",
  "ppsm",
  "xlam",
  "ppam",
]);

export interface IncomingAttachment {
  originalname: string;
  /** The uploaded file on disk (diskUpload). */
  path: string;
  size: number;
}

/** The final extension as Windows and browsers read it: trailing dots and spaces are dropped there. */
function extensionOf(name: string): string {
  const trimmed = name.replace(/[. ]+$/, "");
  const dot = trimmed.lastIndexOf(".");
  return dot > 0 ? trimmed.slice(dot + 1).toLowerCase() : "";
}

/** Refuses names that would run or render as active content once downloaded. */
export function checkAttachmentName(name: string) {
  const ext = extensionOf(safeName(name));
  if (ACTIVE_EXTENSIONS.has(ext)) {
    throw new HttpError(415, "active_content", said("attachments.activeContent", { name: safeName(name), ext }), { field: "files", extension: ext });
  }
}

/**
 * The name a file is kept and offered under: safe, with the extension of the kind its content is
 * (a PDF ends in .pdf, text in .txt or .csv). A name that ends in another known or active
 * extension has it replaced; any other name gets the right one added.
 */
export function nameForKind(name: string, mime: string): string {
  const clean = safeName(name).replace(/[. ]+$/, "") || "file";
  const exts = EXTENSIONS[mime] ?? ["bin"];
  const ext = extensionOf(clean);
  if (exts.includes(ext)) return clean;
  let base = clean;
  if (ext && (KNOWN_EXTENSIONS.has(ext) || ACTIVE_EXTENSIONS.has(ext))) base = clean.slice(0, clean.length - ext.length - 1);
  // "poly.jpg.html" of JPEG content: "poly.jpg", not "poly.jpg.jpg".
  if (exts.includes(extensionOf(base))) return base;
  return `${base || "file"}.${exts[0]}`;
}

/** Whether a file holds a NUL byte (then it is not text), read in chunks, never whole. */
async function hasNulByte(file: string): Promise<boolean> {
  for await (const chunk of fs.createReadStream(file, { highWaterMark: 256 * 1024 })) {
    if ((chunk as Buffer).includes(0)) return true;
  }
  return false;
}

async function sha256File(file: string): Promise<string> {
  const hash = crypto.createHash("sha256");
  await pipeline(fs.createReadStream(file), hash);
  return hash.digest("hex");
}

/**
 * Checks, stores and records the files. `recheck` runs inside the final transaction: the record
 * may have been closed or removed while the files arrived.
 */
export async function addAttachments(
  db: Db,
  user: Actor,
  ownerKind: "investigation" | "claim",
  ownerId: number,
  files: IncomingAttachment[],
  dir: string,
  recheck: (sqlite: Database.Database) => void = () => undefined,
) {
  const { fileTypeFromFile } = await import("file-type");
  if (files.length === 0) throw badRequest(said("attachments.noFile"), { field: "files" }, "no_file");
  const checked: { file: IncomingAttachment; mime: string; name: string }[] = [];
  for (const f of files) {
    const shown = safeName(f.originalname);
    if (f.size === 0) throw badRequest(said("attachments.empty", { name: shown }), { field: "files" }, "empty_file");
    checkAttachmentName(f.originalname);
    const t = await fileTypeFromFile(f.path);
    let mime = t ? ALLOWED.get(t.ext) : undefined;
    // Text is kept as text, but not under a name that claims a document or an image it is not.
    const claimsBinary = CLAIMED_BINARY.test(shown);
    if (!t && !claimsBinary && !(await hasNulByte(f.path))) mime = /\.csv$/i.test(shown) ? "text/csv" : "text/plain";
    if (!t && claimsBinary) {
      throw new HttpError(415, "unsupported_file", said("attachments.misnamed", { name: shown, ext: extensionOf(shown).toUpperCase() }));
    }
    if (!mime) {
      throw new HttpError(
        415,
        "unsupported_file",
        t ? said("attachments.unsupportedKind", { name: shown, ext: t.ext.toUpperCase() }) : said("attachments.unsupported", { name: shown }),
      );
    }
    checked.push({ file: f, mime, name: nameForKind(f.originalname, mime) });
  }
  // Files first (copied under a temporary name, then renamed), the rows after: a crash leaves no row without a file.
  const stored: { id: string; file: IncomingAttachment; mime: string; name: string; sha256: string }[] = [];
  let copying: string | null = null;
  try {
    try {
      await fs.promises.mkdir(dir, { recursive: true });
      for (const c of checked) {
        const id = crypto.randomUUID();
        copying = path.join(dir, `${id}.tmp`);
        await fs.promises.copyFile(c.file.path, copying);
        await fs.promises.rename(copying, path.join(dir, id));
        copying = null;
        stored.push({ ...c, id, sha256: await sha256File(path.join(dir, id)) });
      }
    } catch (err) {
      throw storeError(err, "attachment");
    }
    db.transaction(() => {
      recheck(db.$client);
      checkAttachmentCaps(db.$client, ownerKind, ownerId, user.id, stored.length);
      const ins = db.$client.prepare(
        "insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256, created_by, created_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
      );
      for (const s of stored) ins.run(s.id, ownerKind, ownerId, s.name, s.id, s.mime, s.file.size, s.sha256, user.id, Date.now());
      recordAudit(db, {
        userId: user.id,
        action: `${ownerKind}.attachments.add`,
        entity: ownerKind,
        entityId: ownerId,
        after: stored.map((s) => ({ id: s.id, name: s.name, sha256: s.sha256 })),
      });
    });
  } catch (err) {
    for (const s of stored) await fs.promises.rm(path.join(dir, s.id), { force: true }).catch(() => undefined);
    if (copying) await fs.promises.rm(copying, { force: true }).catch(() => undefined);
    throw err;
  }
}

/**
 * The name shown and offered on download: no path, no control or direction-changing characters,
 * none of the characters Windows refuses in a name; NFC, so "ü" from a Mac matches "ü" from a PC.
 */
export function safeName(name: string): string {
  const base = name.normalize("NFC").replace(/\\/g, "/").split("/").pop() ?? "file";
  const clean = base
    // eslint-disable-next-line no-control-regex
    .replace(/[\u0000-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069\ufeff]/g, "")
    .replace(/[<>:"|?*]/g, "_")
    .trim()
    .slice(0, 200);
  return clean || "file";
}

export function attachmentFile(db: Db, id: string, dir: string) {
  const a = db.$client.prepare("select * from attachments where id = ?").get(id) as Row | undefined;
  if (!a) throw notFound(said("attachments.notFound"));
  const file = path.join(dir, a.stored_file);
  if (!fs.existsSync(file)) throw notFound(said("attachments.fileMissing"));
  // Rows stored before names followed the content are offered under a safe name all the same.
  return {
    file,
    name: nameForKind(a.file_name as string, a.mime as string),
    mime: a.mime as string,
    ownerKind: a.owner_kind as string,
    ownerId: a.owner_id as number,
  };
}
