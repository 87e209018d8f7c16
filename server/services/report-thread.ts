/**
 * The report thread, seen from the main thread. The reports that read the slab facts (overview,
 * rate against a variable, screening, process window, control chart, before/after, adjusted model)
 * take up to a second of arithmetic each on a large plant; on the main thread every defect being
 * saved meanwhile waited behind them. Here one worker thread owns the facts (report-cache.ts) on its
 * own SQLite connection and runs those reports; the main thread sends the query and gets the result
 * (the Excel workbook is still built here from that result, as before).
 *
 * One thread, not a pool: the facts take about a quarter of a gigabyte per million slabs, and a
 * second copy would double that. A plain worker rather than piscina (which the imports use): every
 * message goes through one port, so a change notice sent before a report reaches the thread before
 * it — piscina's tasks and a side channel would not keep that order.
 *
 * - Freshness: slabFactsChanged on the linked connection is passed on at once (after the
 *   transaction it was called in has ended, so the thread never reads a write before it commits);
 *   a report asked for after a write was answered therefore sees it.
 * - The start: startReportCache on the linked connection starts the loading in the thread; the
 *   main thread keeps the timer of the periodic snapshot (it sees which connection wrote) and tells
 *   the thread the change count the snapshot may claim.
 * - Admission: at most `maxWaiting` reports running or waiting; past that the answer is "busy".
 * - Its heap is capped; a thread that dies (out of memory, stopped) fails only the reports it had
 *   (503 in words), and a new one starts at once — loading the facts again when the server had
 *   started the cache — so no request is left waiting.
 */
import { EventEmitter } from "node:events";
import { Worker } from "node:worker_threads";
import type { Db } from "../db/client";
import { HttpError, said } from "../lib/http-error";
import type { Logger } from "../lib/logger";
import { currentLanguage } from "../lib/words";
import { threadEntry } from "../lib/paths";
import { linkReportThread, type ReportCacheHandle, type ReportCacheOptions, type ReportCacheStatus } from "./report-cache";
import { defaultedKeys, type FromReportThread, type ReportThreadData, type ThreadError, type ToReportThread } from "./report-thread-protocol";

export interface ReportThreadOptions {
  logger?: Logger;
  /** Heap of the report thread, MB (default 2048). The facts' columns live outside it. */
  heapMb?: number;
  /** Reports running or waiting before others are asked to try again (default 32). */
  maxWaiting?: number;
  /** How far below the main thread the reports run (nice value, default 10; 0: the same priority). */
  nice?: number;
  /** Helper threads of a large screening, and from how many slabs (reports/screening-threads.ts; unset: its defaults). */
  screening?: { threads?: number; sharedFrom?: number };
  /** Memory for the report cache's condition columns, MB (report-cache-disk.ts; unset: its default). */
  columnsMb?: number;
  /** Where the condition columns' files go (unset: beside the database). */
  columnsDir?: string;
}

type Pending = { resolve: (r: { value: unknown; status: ReportCacheStatus | null }) => void; reject: (e: unknown) => void };

interface CacheRun {
  token: number;
  opts: ReportCacheOptions;
  status: ReportCacheStatus;
  closed: boolean;
}

const WARMING: ReportCacheStatus = { state: "warming", from: null, snapshotIgnored: null, slabs: null };

export function createReportThread(db: Db, opts: ReportThreadOptions = {}) {
  const sqlite = db.$client;
  const heapMb = opts.heapMb ?? 2048;
  const maxWaiting = opts.maxWaiting ?? 32;
  const events = new EventEmitter();
  let worker: Worker | null = null;
  let closing = false;
  let nextId = 1;
  let nextToken = 1;
  let restarts = 0;
  let lastFailure: string | null = null;
  /** The current thread has loaded its modules and listens (one that dies before is not restarted in a loop). */
  let online = false;
  const pending = new Map<number, Pending>();
  let reportsInFlight = 0;
  /** Reports answered with an answer kept in the thread (report-answers.ts). */
  let reused = 0;
  /** The cache run the server started (the latest not closed): started again in a new thread. */
  let cache: CacheRun | null = null;
  /** Change notices made inside a transaction: sent when it has ended. */
  let deferred: (number[] | null)[] = [];

  function spawn(): Worker {
    const data: ReportThreadData = {
      databaseFile: sqlite.name,
      logLevel: opts.logger?.level ?? "silent",
      nice: opts.nice ?? 10,
      screening: opts.screening,
      columnsMb: opts.columnsMb,
      columnsDir: opts.columnsDir,
    };
    const w = new Worker(threadEntry("report-thread.js", "./report-thread-entry.mjs", import.meta.url), {
      workerData: data,
      resourceLimits: { maxOldGenerationSizeMb: heapMb },
    });
    // The thread never keeps a process alive by itself (the HTTP server does that for the server).
    w.unref();
    w.on("message", (m: FromReportThread) => onMessage(m));
    w.on("error", (err) => {
      lastFailure = (err as NodeJS.ErrnoException).code === "ERR_WORKER_OUT_OF_MEMORY" ? "out of memory" : String((err as Error)?.message ?? err);
      opts.logger?.error({ err }, "report thread failed");
    });
    w.on("exit", (code) => onExit(w, code));
    return w;
  }

  function ensure(): Worker {
    if (!worker) {
      online = false;
      worker = spawn();
      deferred = [];
    }
    return worker;
  }

  function onMessage(m: FromReportThread) {
    if (m.type === "log") {
      process.stdout.write(m.line);
      return;
    }
    if (m.type === "online") {
      online = true;
      return;
    }
    if (m.type === "started") {
      events.emit("report-started", m.kind);
      return;
    }
    if (m.type !== "reply") return;
    if (m.status && cache && !cache.closed) cache.status = m.status;
    const p = pending.get(m.id);
    if (!p) return;
    pending.delete(m.id);
    if (m.ok && m.reused) {
      reused++;
      events.emit("report-reused");
    }
    if (m.ok) p.resolve({ value: m.value, status: m.status });
    else p.reject(fromThread(m.error));
  }

  function fromThread(e: ThreadError): Error {
    if (e.http) return new HttpError(e.status, e.code, e.said ?? e.message, e.details);
    const err = new Error(e.message);
    if (e.stack) err.stack = e.stack;
    return err;
  }

  function onExit(w: Worker, code: number) {
    if (worker !== w) return;
    worker = null;
    const outOfMemory = lastFailure === "out of memory";
    const wasOnline = online;
    lastFailure = null;
    if (closing) return;
    restarts++;
    opts.logger?.error({ code, reports: reportsInFlight, outOfMemory }, "report thread stopped; starting a new one");
    const stopped = new HttpError(503, "reports_restarted", said(outOfMemory ? "reports.outOfMemory" : "reports.restarted"), { retryAfterSeconds: 5 });
    for (const [id, p] of pending) {
      pending.delete(id);
      p.reject(stopped);
    }
    // A thread always alive when the server loads the facts in the background: the new one loads them
    // again (reports say "warming up" meanwhile). Otherwise — or when the thread could not even start,
    // which a new one would repeat at once — the next report starts one.
    if (cache && !cache.closed && wasOnline) {
      cache.status = { ...WARMING };
      post({ type: "start", id: nextId++, token: cache.token, snapshotFile: cache.opts.snapshotFile, sliceMs: cache.opts.sliceMs });
    }
    events.emit("restarted", restarts);
  }

  function flushDeferred() {
    if (!deferred.length) return;
    if (sqlite.open && sqlite.inTransaction) {
      setImmediate(flushDeferred);
      return;
    }
    const notices = deferred;
    deferred = [];
    for (const slabIds of notices) worker?.postMessage({ type: "changed", slabIds } satisfies ToReportThread);
  }

  function post(m: ToReportThread) {
    const w = ensure();
    // Notices held back for a transaction go first: they were made before this message.
    // (Only change notices are ever made inside a transaction; nothing else is sent from one.)
    if (m.type !== "changed") flushDeferred();
    w.postMessage(m);
  }

  function request(m: ToReportThread & { id: number }) {
    return new Promise<{ value: unknown; status: ReportCacheStatus | null }>((resolve, reject) => {
      pending.set(m.id, { resolve, reject });
      post(m);
    });
  }

  /** The change count of slab_conditions now (what a snapshot asked for now may claim). */
  const changeCount = () => (sqlite.prepare("select version from report_cache_state where id = 1").pluck().get() as number | undefined) ?? -1;

  /** Runs a report that reads the slab facts in the thread; its result, or its HttpError as thrown there. */
  async function run(kind: string, query: unknown): Promise<unknown> {
    if (closing) throw new HttpError(503, "reports_stopping", said("reports.stopping"), { retryAfterSeconds: 10 });
    if (reportsInFlight >= maxWaiting) {
      throw new HttpError(429, "reports_busy", said("reports.busy", { n: maxWaiting }), { retryAfterSeconds: 5 });
    }
    reportsInFlight++;
    try {
      return (await request({ type: "report", id: nextId++, kind, query, defaulted: defaultedKeys(query), language: currentLanguage() })).value;
    } finally {
      reportsInFlight--;
    }
  }

  const link = {
    run,
    changed(slabIds: number[] | null) {
      // No thread yet (or none since it stopped): the next one reads everything fresh anyway.
      if (!worker) return;
      if (sqlite.inTransaction) {
        // Sent once the transaction has ended: the thread must not read the rows before they are committed.
        if (!deferred.length) queueMicrotask(flushDeferred);
        deferred.push(slabIds);
        return;
      }
      flushDeferred();
      worker.postMessage({ type: "changed", slabIds } satisfies ToReportThread);
    },

    startCache(o: ReportCacheOptions): ReportCacheHandle {
      const run: CacheRun = { token: nextToken++, opts: o, status: { ...WARMING }, closed: false };
      cache = run;
      const started = request({ type: "start", id: nextId++, token: run.token, snapshotFile: o.snapshotFile, sliceMs: o.sliceMs });
      started.catch(() => undefined);
      const control = async (op: "whenReady" | "save" | "close", version?: number) => {
        const r = await request({ type: "cache", id: nextId++, token: run.token, op, version });
        if (r.status && cache === run) run.status = r.status;
        return r.value;
      };
      const save = async () => (await control("save", changeCount())) as "written" | "unchanged" | "not ready";

      // The periodic snapshot, as report-cache.ts does it in-process: written only after a whole period
      // in which no other connection (an import thread) wrote, so it never misses a change not yet told.
      let dataVersion = sqlite.pragma("data_version", { simple: true }) as number;
      const timer =
        o.snapshotEveryMs === null
          ? undefined
          : setInterval(
              () => {
                if (!sqlite.open) return;
                const dv = sqlite.pragma("data_version", { simple: true }) as number;
                const quiet = dv === dataVersion;
                dataVersion = dv;
                if (quiet) void save().catch((err) => o.logger?.error({ err }, "report cache snapshot failed"));
              },
              o.snapshotEveryMs ?? 10 * 60_000,
            );
      timer?.unref();

      return {
        status: () => ({ ...run.status }),
        whenReady: async () => {
          // A thread that stopped while loading is replaced and loads again: wait for that one.
          for (;;) {
            try {
              await started;
              await control("whenReady");
              return;
            } catch (err) {
              if (!(err instanceof HttpError && err.code === "reports_restarted") || run.closed) return;
            }
          }
        },
        saveSnapshot: () => save(),
        close: async () => {
          clearInterval(timer);
          if (run.closed) return;
          try {
            await control("close", changeCount());
          } catch (err) {
            o.logger?.error({ err }, "report cache snapshot at shutdown failed");
          }
          run.closed = true;
          if (cache === run) cache = null;
        },
      };
    },
  };
  const unlink = linkReportThread(db, link);

  return {
    run,
    /**
     * "report-started" (kind) when the thread begins a report; "report-reused" when it gives an answer
     * kept (report-answers.ts) instead; "restarted" (count) after a thread stopped.
     */
    events,
    stats: () => ({ running: worker !== null, reportsInFlight, restarts, reused }),
    /** Stops the thread as running out of memory would (for the tests of what follows). */
    async kill() {
      await worker?.terminate();
    },
    /** Stops the thread (after the report cache's close at shutdown). */
    async close() {
      closing = true;
      unlink();
      const w = worker;
      if (!w) return;
      const exited = new Promise<void>((resolve) => w.once("exit", () => resolve()));
      flushDeferred();
      w.postMessage({ type: "exit" } satisfies ToReportThread);
      // A report still computing is not waited for long.
      const timer = setTimeout(() => void w.terminate(), 5_000);
      await exited;
      clearTimeout(timer);
      for (const [id, p] of pending) {
        pending.delete(id);
        p.reject(new HttpError(503, "reports_stopping", said("reports.stopping"), { retryAfterSeconds: 10 }));
      }
    },
  };
}

export type ReportThread = ReturnType<typeof createReportThread>;
