/**
 * One import, run in a worker thread: read the file or feed body under the limits, check every cell,
 * plan against the database and (unless a dry run) write, all on the worker's own SQLite connection
 * to the same file. The server's main thread only waits for the answer, so it keeps serving the
 * plant meanwhile; a file that still gets past the limits can exhaust only this thread's heap.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import type { MessagePort } from "node:worker_threads";
import type { ImportKind, ImportResult } from "@shared/api/imports";
import { openDatabase } from "../db/client";
import { HttpError } from "../lib/http-error";
import { runImport, type ImportActor } from "../services/import.service";
import { onSlabFactsChanged } from "../services/report-cache";
import { readTable, tableFromJson } from "./read-table";
import type { Limits } from "./read-xlsx";

export interface ImportTask {
  databaseFile: string;
  kind: ImportKind;
  dryRun: boolean;
  source: "upload" | "ingest";
  /** An uploaded file on disk, or the feed's JSON body. */
  file?: string;
  fileName?: string | null;
  json?: Uint8Array;
  by: ImportActor;
  limits: Limits;
  /** Told "started" when this thread takes the import, "writing" when the checks are over and the transaction writes. */
  progress?: MessagePort;
}

/**
 * SQLite's page cache for an import's own connection, KiB. The server's connections keep 64 MB
 * (db/client.ts), which an import does not need: its writes mostly append to the tables' ends and
 * spill to the WAL as the transaction grows. Writing 100,000 slabs took no measurably longer with
 * 16 MB than with 64 MB on the 2-core machine (`npm run bench:import`), and the import's peak RSS
 * fell by 30–45 MB.
 */
const IMPORT_CACHE_KIB = 16_384;

/** The import's connection: the server's settings (db/client.ts) with a smaller page cache. */
export function openImportDatabase(file: string) {
  const db = openDatabase(file);
  db.$client.pragma(`cache_size = -${IMPORT_CACHE_KIB}`);
  return db;
}

export type ImportOutcome =
  { ok: true; result: ImportResult; changedSlabs: number[] | "all" | null } | { ok: false; status: number; code: string; message: string; details?: unknown };

async function sha256File(file: string): Promise<string> {
  const hash = crypto.createHash("sha256");
  for await (const chunk of fs.createReadStream(file)) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

export async function runImportTask(task: ImportTask | { warm: true }): Promise<ImportOutcome | null> {
  // A warm-up: the thread has loaded this module; nothing to do.
  if ("warm" in task) return null;
  task.progress?.postMessage("started");
  const changed = new Set<number>();
  let changedAll = false;
  const stop = onSlabFactsChanged((ids) => {
    if (ids === null) changedAll = true;
    else for (const id of ids) changed.add(id);
  });
  const db = openImportDatabase(task.databaseFile);
  try {
    let table;
    let sha: string | null = null;
    if (task.file) {
      try {
        table = await readTable(task.file, task.limits);
      } catch (err) {
        // Anything a reader did not foresee in a file is still the file's fault, not the server's.
        if (err instanceof HttpError) throw err;
        throw new HttpError(415, "unsupported_file", "The file could not be read; it may be damaged. Save it again as .xlsx or CSV and retry.");
      }
      sha = await sha256File(task.file);
    } else {
      let body: unknown;
      try {
        body = JSON.parse(Buffer.from(task.json ?? new Uint8Array()).toString("utf8"));
      } catch {
        throw new HttpError(400, "bad_json", "The body is not valid JSON: send a JSON array of objects.");
      }
      table = tableFromJson(body, task.kind, task.limits);
    }
    const result = runImport(db, {
      kind: task.kind,
      table,
      dryRun: task.dryRun,
      fileName: task.fileName ?? null,
      sha256: sha,
      source: task.source,
      by: task.by,
      onWrite: () => task.progress?.postMessage("writing"),
    });
    return { ok: true, result, changedSlabs: changedAll ? "all" : changed.size ? [...changed] : null };
  } catch (err) {
    if (err instanceof HttpError) return { ok: false, status: err.status, code: err.code, message: err.message, details: err.details };
    throw err;
  } finally {
    stop();
    task.progress?.close();
    db.$client.close();
  }
}
