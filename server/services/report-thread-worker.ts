/**
 * The report thread itself (started by report-thread.ts): it owns the slab facts (report-cache.ts)
 * on its own SQLite connection to the server's file and runs the reports that read them, so a
 * report's second of arithmetic never holds up a defect being saved on the main thread.
 *
 * Everything comes through one port, in the order the main thread sent it: a change notice sent
 * before a report is recorded before that report runs, so a report asked for after a write was
 * answered sees the write. A report runs start to end in one turn; loading the facts after a start
 * runs in slices in between (report-cache.ts), and the reports asked for meanwhile answer "warming up".
 */
import { parentPort, workerData } from "node:worker_threads";
import { pino } from "pino";
import { openDatabase } from "../db/client";
import { collectGarbage, collectsAfterReport } from "../lib/collect-garbage";
import { HttpError } from "../lib/http-error";
import { lowerThisThreadPriority } from "../lib/thread-priority";
import { speakingIn } from "../lib/words";
import fs from "node:fs";
import { configureColumnMemory } from "./report-cache-disk";
import { answerKey, ReportAnswers } from "./report-answers";
import { dataState, slabFactsChanged, startReportCache, type ReportCacheHandle, type ReportCacheStatus } from "./report-cache";
import { adjustedModel } from "./reports/adjusted";
import { beforeAfter } from "./reports/before-after";
import { controlChart } from "./reports/control-chart";
import { overview } from "./reports/overview";
import { processWindow } from "./reports/process-window";
import { rateByVariable } from "./reports/rate-by-variable";
import { screening } from "./reports/screening";
import {
  configureScreeningThreads,
  helpersFor,
  lastScreeningShare,
  screeningThreadSettings,
  startScreeningHelpers,
  stopScreeningHelpers,
} from "./reports/screening-threads";
import { markDefaulted, type FromReportThread, type ReportThreadData, type ThreadError, type ToReportThread } from "./report-thread-protocol";

const REPORTS: Record<string, (db: ReturnType<typeof openDatabase>, query: never) => unknown> = {
  overview,
  "rate-by-variable": rateByVariable,
  screening,
  "process-window": processWindow,
  "control-chart": controlChart,
  "before-after": beforeAfter,
  adjusted: adjustedModel,
};

const port = parentPort!;
const data = workerData as ReportThreadData;
const send = (m: FromReportThread) => port.postMessage(m);

// Log lines go to the main thread, which writes them where its own go, in order with its replies
// (a line written by this thread straight to stdout could be lost when the process exits).
const logger = pino({ level: data.logLevel, base: { app: "strandsight" } }, { write: (line: string) => send({ type: "log", line }) });

// The reports give way to the write path: a defect being saved gets the processor first when both
// want it, and the reports take what is left.
lowerThisThreadPriority(data.nice);
// A screening's helper threads give way likewise.
configureScreeningThreads({ nice: data.nice, threads: data.screening?.threads ?? null, sharedFrom: data.screening?.sharedFrom });
// Condition columns beyond this memory are kept in files, beside the database or in their own folder
// (made here when missing; one that cannot be made keeps the columns in memory, said in the log).
if (data.columnsDir) {
  try {
    fs.mkdirSync(data.columnsDir, { recursive: true, mode: 0o700 });
  } catch {
    // Said when the first file cannot be made there.
  }
}
configureColumnMemory(data.columnsMb ?? null, data.columnsDir ?? null);

// 8 MB of page cache, not 64 (db/client.ts): the reports read the slab data from the report cache's
// columns; SQLite gives them names, defects and changed slabs. The trade, measured at five million
// slabs: 45–57 MB less RSS, and ≈ 30 ms more on each of a report's defect queries (their pages come
// from the OS's file cache; any cache under 64 MB costs the same).
const db = openDatabase(data.databaseFile, { cacheMb: 8 });
/** The cache runs started by the main thread (startReportCache there), by its token. */
const caches = new Map<number, ReportCacheHandle>();
let current: ReportCacheHandle | null = null;

/** Answers given again while nothing they read has changed (report-answers.ts). */
const answers = new ReportAnswers();

/** The main thread said "exit": helpers stopping now are not a failure. */
let exiting = false;

const status = (): ReportCacheStatus | null => current?.status() ?? null;

function asThreadError(err: unknown): ThreadError {
  if (err instanceof HttpError) return { http: true, status: err.status, code: err.code, message: err.message, said: err.said, details: err.details };
  const e = err as Error;
  return { http: false, message: e?.message ?? String(err), stack: e?.stack };
}

/** An answer kept (report-answers.ts); one that cannot be (the database's state unreadable) is simply not. */
function keep(key: string, dataVersion: number, value: unknown) {
  try {
    answers.put(key, `${dataVersion}|${dataState(db).facts}`, value);
  } catch (err) {
    logger.debug({ err }, "report answer not kept");
  }
}

async function handle(m: ToReportThread) {
  switch (m.type) {
    case "changed":
      slabFactsChanged(db, m.slabIds ?? undefined);
      return;
    case "report": {
      // The same question on the same data: the answer worked out last time (report-answers.ts).
      // Asking the database which state it is in can fail like any read (the file gone, damaged):
      // then the report is worked out, and fails or answers as it would have.
      const key = answerKey({ kind: m.kind, query: m.query, defaulted: m.defaulted, language: m.language });
      let before: number | null = null; // data_version before the report reads anything
      let kept: unknown;
      try {
        const state = dataState(db);
        kept = answers.get(key, `${state.dataVersion}|${state.facts}`);
        before = state.dataVersion;
      } catch {
        // Nothing kept is given, and nothing worked out now will be.
      }
      if (kept !== undefined) {
        send({ type: "reply", id: m.id, ok: true, value: kept, status: status(), reused: true });
        return;
      }
      send({ type: "started", id: m.id, kind: m.kind });
      const began = performance.now();
      try {
        const run = REPORTS[m.kind];
        if (!run) throw new Error(`no report ${m.kind} in the report thread`);
        markDefaulted(m.query, m.defaulted);
        const from = performance.now();
        const value = speakingIn(m.language, () => run(db, m.query as never));
        send({ type: "reply", id: m.id, ok: true, value, status: status(), reused: false });
        // Kept under the database as it was before the report read it (a commit meanwhile moves it on)
        // and the facts as the report left them (it applies the changes recorded before it).
        if (before !== null) keep(key, before, value);
        if (m.kind === "screening") {
          const share = lastScreeningShare();
          const line = { ...share, ms: Math.round(performance.now() - from) };
          // Helpers that failed cost time, not the answer: said once, with why.
          if (share.failedOver > 0 || share.failures.length > 0) logger.warn(line, "screening helpers failed; the report thread worked their tests");
          else logger.debug(line, "screening worked");
        }
      } catch (err) {
        send({ type: "reply", id: m.id, ok: false, error: asThreadError(err), status: status() });
      }
      // Its answer sent, what a report on a large plant let go is collected now (collectsAfterReport).
      if (collectsAfterReport(status(), performance.now() - began)) collectGarbage();
      return;
    }
    case "start": {
      const h = startReportCache(db, { snapshotFile: m.snapshotFile, sliceMs: m.sliceMs, snapshotEveryMs: null, logger });
      caches.set(m.token, h);
      current = h;
      // A plant large enough to share its screenings out has the helpers started once the facts are
      // in, so the first screening does not wait for them to load their code.
      void h
        .whenReady()
        .then(async () => {
          const slabs = h.status().slabs ?? 0;
          const helpers = helpersFor(slabs);
          if (helpers > 0 && slabs >= screeningThreadSettings().sharedFrom) await startScreeningHelpers(helpers);
        })
        .catch((err: unknown) => {
          if (!exiting) logger.warn({ err }, "screening helpers did not start");
        });
      send({ type: "reply", id: m.id, ok: true, value: null, status: status() });
      return;
    }
    case "cache": {
      const h = caches.get(m.token);
      try {
        let value: unknown = null;
        if (h && m.op === "whenReady") await h.whenReady();
        else if (h && m.op === "save") value = await h.saveSnapshot(m.version);
        else if (h && m.op === "close") {
          await h.close(m.version);
          caches.delete(m.token);
        } else if (!h && m.op === "save") value = "not ready";
        send({ type: "reply", id: m.id, ok: true, value, status: h?.status() ?? status() });
      } catch (err) {
        send({ type: "reply", id: m.id, ok: false, error: asThreadError(err), status: status() });
      }
      return;
    }
    case "exit":
      exiting = true;
      await stopScreeningHelpers();
      db.$client.close();
      port.close();
      return;
  }
}

port.on("message", (m: ToReportThread) => {
  // Reports and notices are synchronous: they run in arrival order. The cache's waits (whenReady,
  // a snapshot being written) go on in the background while later messages are handled.
  void handle(m).catch((err) => logger.error({ err }, "report thread message failed"));
});
send({ type: "online" });
