/**
 * Imports run in worker threads (piscina), never on the main thread: reading, checking, planning and
 * writing a file of 200,000 rows takes seconds, and the plant's other requests must keep flowing.
 * Each worker's heap is capped, so a file that gets past the reader's limits stops that worker
 * (413), not the server; a check that runs too long is stopped too. Few imports run at once and
 * few wait: past that the plant's people are asked to try again in a minute.
 */
import { MessageChannel } from "node:worker_threads";
import { Piscina } from "piscina";
import { IMPORT_LIMITS } from "@shared/api/imports";
import type { ImportResult } from "@shared/api/imports";
import type { Db } from "../db/client";
import type { Language } from "@shared/i18n/languages";
import { HttpError, said, sayIn, type Said } from "../lib/http-error";
import type { Logger } from "../lib/logger";
import { slabFactsChanged } from "../services/report-cache";
import type { ImportOutcome, ImportTask } from "./import-worker";
import type { Limits } from "./read-xlsx";
import { saidOfRowError, withSaid } from "./coerce";
import { outOfMemory } from "./sheet-reader";
import { threadEntry } from "../lib/paths";

export interface ImportPoolOptions {
  /** Imports running at once (default 2: the rest of the plant keeps a core). */
  maxThreads?: number;
  /** Imports waiting for a thread before others are turned away (default 4; each waits at most 2 minutes). */
  maxQueue?: number;
  /** Heap of one import thread, MB (default 1024; IMPORT_THREAD_HEAP_MB). */
  heapMb?: number;
  limits?: Limits;
  logger?: Logger;
  /** How long an import may wait for a thread (default 2 minutes). */
  queueWaitMs?: number;
}

export type ImportJob = Omit<ImportTask, "databaseFile" | "limits" | "heapMb" | "progress">;

/** Puts the Saids the import thread sent beside a result back on its row errors (unlisted, as coerce.ts keeps them). */
function withRowSaids<T>(result: T, saids: (Said | null)[] | undefined): T {
  const errors = (result as Partial<ImportResult> | null | undefined)?.errors;
  if (saids && Array.isArray(errors)) errors.forEach((e, i) => saids[i] && withSaid(e, saids[i]));
  return result;
}

/** A result with its row errors' messages in a language (those without a Said as they are). */
export function sayRowErrors(result: ImportResult, language: Language | null | undefined): ImportResult {
  if (!language || language === "en") return result;
  return {
    ...result,
    errors: result.errors.map((e) => {
      const s = saidOfRowError(e);
      return s ? { ...e, message: sayIn(s, language) } : e;
    }),
  };
}

/** Heap of one import thread unless told otherwise (IMPORT_THREAD_HEAP_MB); the import bench runs its import under the same cap. */
export const IMPORT_THREAD_HEAP_MB = 1024;

export function createImportPool(opts: ImportPoolOptions = {}) {
  const limits = opts.limits ?? IMPORT_LIMITS;
  const heapMb = opts.heapMb ?? IMPORT_THREAD_HEAP_MB;
  // V8's heap flag is process-wide: given on the command line it overrides every thread's own cap.
  if (/max[-_]old[-_]space[-_]size/.test([...process.execArgv, process.env.NODE_OPTIONS ?? ""].join(" "))) {
    opts.logger?.warn("--max-old-space-size is set for the process: it overrides the import threads' memory cap (IMPORT_THREAD_HEAP_MB). Leave it out.");
  }
  const maxThreads = opts.maxThreads ?? 2;
  const maxQueue = opts.maxQueue ?? 4;
  // How long an import may wait for a thread before the answer is "busy, try again".
  const queueWaitMs = opts.queueWaitMs ?? 120_000;
  let pool: Piscina | null = null;
  let closing = false;
  // Made on the first import, so a server (or a test) that imports nothing starts no thread.
  const getPool = () =>
    (pool ??= (() => {
      const p = new Piscina({
        // From the sources, a small .mjs entry registers tsx in the thread first; the compiled
        // server (build/server) has the worker compiled beside it.
        filename: threadEntry("import-worker.js", "./import-thread-entry.mjs", import.meta.url).href,
        // One thread always alive: piscina replaces a thread that died (out of memory, stopped)
        // only up to minThreads, and with none left the imports waiting would never start. It also
        // answers the level-2 feed's frequent small calls without starting again.
        minThreads: 1,
        maxThreads,
        idleTimeout: 60_000,
        concurrentTasksPerWorker: 1,
        resourceLimits: { maxOldGenerationSizeMb: heapMb },
      });
      // A thread that dies while idle (none should) must not bring the server down.
      p.on("error", (err) => opts.logger?.error({ err }, "import thread failed"));
      return p;
    })());

  const busy = () => new HttpError(429, "imports_busy", said("imports.busy", { n: maxThreads }), { retryAfterSeconds: 60 });

  // Imports admitted (running or waiting): counted here rather than left to piscina's queue, whose
  // capacity moves with threads that are still starting.
  let admitted = 0;

  return {
    /** Runs the import; its row errors (in the answer, or in a 422's details) are said in `language` (English where none). */
    async run(db: Db, job: ImportJob, language?: Language | null): Promise<ImportResult> {
      if (admitted >= maxThreads + maxQueue) throw busy();
      admitted++;
      try {
        return sayRowErrors(await runAdmitted(db, job), language);
      } catch (err) {
        if (err instanceof HttpError && err.code === "import_rejected" && language && language !== "en") {
          throw new HttpError(err.status, err.code, err.said ?? err.message, sayRowErrors(err.details as ImportResult, language));
        }
        throw err;
      } finally {
        admitted--;
      }
    },
    /** Starts the first thread now, so the first import (or feed call) does not wait for it. */
    warm: async () => {
      await getPool()
        .run({ warm: true })
        // Stopped while still starting (a shutdown right after the start) is not a failure.
        .catch((err) => closing || opts.logger?.error({ err }, "import thread failed to start"));
    },
    close: async () => {
      closing = true;
      await pool?.destroy();
      pool = null;
    },
  };

  async function runAdmitted(db: Db, job: ImportJob): Promise<ImportResult> {
    const databaseFile = db.$client.name;
    const abort = new AbortController();
    const { port1, port2 } = new MessageChannel();
    // Waiting for a thread, checking, writing: each phase has its own bound. Once the worker
    // writes it finishes (a stopped writer would be rolled back by SQLite, but a half-minute of
    // writing is an import, not an attack).
    let phase: "waiting" | "checking" | "writing" = "waiting";
    let timer = setTimeout(() => abort.abort("waiting"), queueWaitMs);
    port1.on("message", (m) => {
      clearTimeout(timer);
      if (m === "started") {
        phase = "checking";
        timer = setTimeout(() => abort.abort("checking"), (limits.checkSeconds + 15) * 1000);
      } else if (m === "writing") phase = "writing";
    });
    const task: ImportTask = { ...job, databaseFile, limits, heapMb, progress: port2 };
    let outcome: ImportOutcome;
    try {
      outcome = (await getPool().run(task, { signal: abort.signal, transferList: [port2] })) as ImportOutcome;
    } catch (err) {
      const e = err as { name?: string; code?: string; message?: string };
      if (e.name === "AbortError") {
        if (phase === "waiting") throw busy();
        throw new HttpError(413, "import_too_large", said("imports.checkTooLong", { seconds: limits.checkSeconds }));
      }
      if (e.code === "ERR_WORKER_OUT_OF_MEMORY") {
        opts.logger?.error({ kind: job.kind, file: job.fileName }, "import stopped: its thread ran out of memory");
        throw outOfMemory(heapMb);
      }
      throw err;
    } finally {
      clearTimeout(timer);
      port1.close();
    }
    if (!outcome.ok) throw new HttpError(outcome.status, outcome.code, outcome.said ?? outcome.message, withRowSaids(outcome.details, outcome.rowSaids));
    // The worker wrote through its own connection: tell this connection's report cache.
    if (outcome.changedSlabs === "all") slabFactsChanged(db);
    else if (outcome.changedSlabs?.length) slabFactsChanged(db, outcome.changedSlabs);
    return withRowSaids(outcome.result, outcome.rowSaids);
  }
}

export type ImportPool = ReturnType<typeof createImportPool>;
