/**
 * One import, run in a worker thread: read the file or feed body under the limits, check every cell,
 * plan against the database and (unless a dry run) write, all on the worker's own SQLite connection
 * to the same file. The server's main thread only waits for the answer, so it keeps serving the
 * plant meanwhile; a file that still gets past the limits can exhaust only this thread's heap.
 * A large workbook of heats or slabs is read in a thread of its own (sheet-reader.ts), while this
 * one checks and writes the rows already read (import.service.ts, runImportStreamed); that thread's
 * heap is capped alike.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import type { MessagePort } from "node:worker_threads";
import type { ImportKind, ImportResult } from "@shared/api/imports";
import { openDatabase } from "../db/client";
import { HttpError, said, type Said } from "../lib/http-error";
import { loadFileType } from "../lib/lazy-packages";
import { runImport, runImportStreamed, type ImportActor } from "../services/import.service";
import { onSlabFactsChanged } from "../services/report-cache";
import { saidOfRowError } from "./coerce";
import { fileKindOf, readTableAs, tableFromJson } from "./read-table";
import type { Limits } from "./read-xlsx";
import { fileNotRead, prepareSheetReader, readSheetInThread, STREAM_FROM_BYTES } from "./sheet-reader";

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
  /** This thread's heap (MB): a reader thread gets the same. */
  heapMb: number;
  /** Told "started" when this thread takes the import, "writing" when the checks are over and the transaction writes. */
  progress?: MessagePort;
  /** How a workbook is streamed (tests and the bench set these; the defaults otherwise). */
  streaming?: { fromBytes?: number; pageCells?: number; writeAheadIdleMs?: number };
  /** Return seconds per phase with the outcome (the import bench). */
  measure?: boolean;
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

/** The Saids of a result's row errors, in its order (null: plain words); none when no error has one. */
type RowSaids = (Said | null)[];

export type ImportOutcome =
  | { ok: true; result: ImportResult; changedSlabs: number[] | "all" | null; timings?: Record<string, number>; rowSaids?: RowSaids }
  /** A refusal: its English, and its Saids (when made with them) for the main thread to answer in the requester's language. */
  | { ok: false; status: number; code: string; message: string; said?: Said[]; details?: unknown; rowSaids?: RowSaids };

/**
 * A result's row errors carry their Saids unlisted (coerce.ts), which a thread's message drops: they
 * are sent beside the result, and the main thread puts them back (import-pool.ts).
 */
function rowSaidsOf(result: unknown): { rowSaids?: RowSaids } {
  const errors = (result as Partial<ImportResult> | null | undefined)?.errors;
  if (!Array.isArray(errors)) return {};
  const saids = errors.map((e) => saidOfRowError(e) ?? null);
  return saids.some((s) => s !== null) ? { rowSaids: saids } : {};
}

async function sha256File(file: string): Promise<string> {
  const hash = crypto.createHash("sha256");
  for await (const chunk of fs.createReadStream(file)) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

/** Reading: anything a reader did not foresee in a file is still the file's fault, not the server's. */
async function asFileFault<T>(read: () => Promise<T>): Promise<T> {
  try {
    return await read();
  } catch (err) {
    if (err instanceof HttpError) throw err;
    throw fileNotRead();
  }
}

export async function runImportTask(task: ImportTask | { warm: true }): Promise<ImportOutcome | null> {
  // A warm-up: the thread loads what an import needs besides this module (file-type, the reader thread's code).
  if ("warm" in task) {
    await loadFileType();
    await prepareSheetReader();
    return null;
  }
  task.progress?.postMessage("started");
  const changed = new Set<number>();
  let changedAll = false;
  const stop = onSlabFactsChanged((ids) => {
    if (ids === null) changedAll = true;
    else for (const id of ids) changed.add(id);
  });
  const db = openImportDatabase(task.databaseFile);
  const timings: Record<string, number> | undefined = task.measure ? {} : undefined;
  const outcome = (result: ImportResult): ImportOutcome => ({
    ok: true,
    result,
    changedSlabs: changedAll ? "all" : changed.size ? [...changed] : null,
    timings,
    ...rowSaidsOf(result),
  });
  const onWrite = () => task.progress?.postMessage("writing");
  try {
    let table;
    let sha: string | null = null;
    if (task.file) {
      const started = performance.now();
      const file = task.file;
      const kind = await asFileFault(() => fileKindOf(file));
      if (
        kind === "xlsx" &&
        (task.kind === "heats" || task.kind === "slabs") &&
        (await fs.promises.stat(file)).size >= (task.streaming?.fromBytes ?? STREAM_FROM_BYTES)
      ) {
        const sheet = await readSheetInThread(file, task.limits, { heapMb: task.heapMb, pageCells: task.streaming?.pageCells });
        if (timings) timings["thread started"] = (performance.now() - started) / 1000;
        try {
          const request = {
            kind: task.kind,
            sheet,
            dryRun: task.dryRun,
            fileName: task.fileName ?? null,
            sha256: () => sha256File(file),
            source: task.source,
            by: task.by,
            onWrite,
            writeAheadIdleMs: task.streaming?.writeAheadIdleMs,
          };
          return outcome(await runImportStreamed(db, request, timings));
        } finally {
          await sheet.stop();
        }
      }
      table = await asFileFault(() => readTableAs(file, kind, task.limits));
      if (timings) timings["read file"] = (performance.now() - started) / 1000;
      sha = await sha256File(file);
    } else {
      let body: unknown;
      try {
        body = JSON.parse(Buffer.from(task.json ?? new Uint8Array()).toString("utf8"));
      } catch {
        throw new HttpError(400, "bad_json", said("imports.badJson"));
      }
      table = tableFromJson(body, task.kind, task.limits);
    }
    const result = runImport(
      db,
      { kind: task.kind, table, dryRun: task.dryRun, fileName: task.fileName ?? null, sha256: sha, source: task.source, by: task.by, onWrite },
      timings,
    );
    return outcome(result);
  } catch (err) {
    if (err instanceof HttpError)
      return { ok: false, status: err.status, code: err.code, message: err.message, said: err.said, details: err.details, ...rowSaidsOf(err.details) };
    throw err;
  } finally {
    stop();
    task.progress?.close();
    db.$client.close();
  }
}
