/**
 * Files attached to investigations and claims: judged by content, stored under generated ids (file
 * first, then the row, in one transaction with the audit), offered for download under a safe name.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import type { Db } from "../db/client";
import { badRequest, HttpError, notFound } from "../lib/http-error";
import { recordAudit } from "./audit.service";

type Row = Record<string, any>;
interface Actor {
  id: string;
}

export const ATTACHMENT_MAX_BYTES = 20 * 1024 * 1024;
export const ATTACHMENT_MAX_FILES = 5;
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

export async function addAttachments(db: Db, user: Actor, ownerKind: "investigation" | "claim", ownerId: number, files: Express.Multer.File[], dir: string) {
  const { fileTypeFromBuffer } = await import("file-type");
  if (files.length === 0) throw badRequest("Choose at least one file (form field “files”).", { field: "files" }, "no_file");
  const checked: { file: Express.Multer.File; mime: string }[] = [];
  for (const f of files) {
    if (f.size === 0) throw badRequest(`${safeName(f.originalname)} is empty.`, { field: "files" }, "empty_file");
    const t = await fileTypeFromBuffer(f.buffer);
    let mime = t ? ALLOWED.get(t.ext) : undefined;
    // Text is kept as text, but not under a name that claims a document or an image it is not.
    const claimsBinary = CLAIMED_BINARY.test(f.originalname);
    if (!t && !f.buffer.includes(0) && !claimsBinary) mime = /\.csv$/i.test(f.originalname) ? "text/csv" : "text/plain";
    if (!t && claimsBinary) {
      throw new HttpError(415, "unsupported_file", `${safeName(f.originalname)} is named as a ${f.originalname.split(".").pop()!.toUpperCase()} file but is not one.`);
    }
    if (!mime) {
      throw new HttpError(415, "unsupported_file", `${f.originalname} is ${t ? `a ${t.ext.toUpperCase()} file` : "not a kind of file kept here"}. Attach PDF, Excel, Word, PowerPoint, PNG, JPEG, WebP, CSV or text files.`);
    }
    checked.push({ file: f, mime });
  }
  fs.mkdirSync(dir, { recursive: true });
  // Files first (temporary name, then renamed), the rows after: a crash leaves no row without a file.
  const stored = checked.map(({ file, mime }) => {
    const id = crypto.randomUUID();
    const tmp = path.join(dir, `${id}.tmp`);
    fs.writeFileSync(tmp, file.buffer);
    fs.renameSync(tmp, path.join(dir, id));
    return { id, file, mime, sha256: crypto.createHash("sha256").update(file.buffer).digest("hex") };
  });
  try {
    db.transaction(() => {
      const ins = db.$client.prepare("insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256, created_by, created_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)");
      for (const s of stored) ins.run(s.id, ownerKind, ownerId, safeName(s.file.originalname), s.id, s.mime, s.file.size, s.sha256, user.id, Date.now());
      recordAudit(db, { userId: user.id, action: `${ownerKind}.attachments.add`, entity: ownerKind, entityId: ownerId, after: stored.map((s) => ({ id: s.id, name: s.file.originalname, sha256: s.sha256 })) });
    });
  } catch (err) {
    for (const s of stored) fs.rmSync(path.join(dir, s.id), { force: true });
    throw err;
  }
}

/** The name shown and offered on download: no path, no control characters. */
export function safeName(name: string): string {
  const base = name.replace(/\\/g, "/").split("/").pop() ?? "file";
  // eslint-disable-next-line no-control-regex
  const clean = base.replace(/[\u0000-\u001f\u007f"]/g, "").trim().slice(0, 200);
  return clean || "file";
}

export function attachmentFile(db: Db, id: string, dir: string) {
  const a = db.$client.prepare("select * from attachments where id = ?").get(id) as Row | undefined;
  if (!a) throw notFound("There is no such attachment.");
  const file = path.join(dir, a.stored_file);
  if (!fs.existsSync(file)) throw notFound("The attachment's file is missing from the store.");
  return { file, name: a.file_name as string, mime: a.mime as string, ownerKind: a.owner_kind as string, ownerId: a.owner_id as number };
}

