/**
 * A screening helper thread (started by screening-threads.ts): takes a screening's tests from the
 * shared counter until none is left, works each with the same code as the calling thread, and sends
 * each row back on its own port. The facts, the scope's rows and the affected slabs are the
 * caller's, on shared memory; the database (its own connection, read only for the names of
 * categories) is the caller's file.
 */
import { parentPort, workerData } from "node:worker_threads";
import { openDatabase } from "../../db/client";
import { lowerThisThreadPriority } from "../../lib/thread-priority";
import { speakingIn } from "../../lib/words";
import type { SlabFacts } from "../report-cache-columns";
import { screenItem, screeningContext, type ScreeningContext } from "./screening";
import { BY_HELPER, FINISHED, NEXT, STATUS, type HelperData, type HelperJob, type HelperResult } from "./screening-threads";

const data = workerData as HelperData;
lowerThisThreadPriority(data.nice);

let db: ReturnType<typeof openDatabase> | null = null;
let dbFile: string | null = null;

function work(job: HelperJob) {
  if (db && dbFile !== job.databaseFile) {
    db.$client.close();
    db = null;
  }
  if (!db) {
    db = openDatabase(job.databaseFile);
    dbFile = job.databaseFile;
  }
  const facts: SlabFacts = { ...job.facts, indexOf: new Int32Array(0) };
  const sc = { facts, rows: job.rows, affected: job.affected };
  let ctx: ScreeningContext | null = null;
  const { control } = job;
  for (;;) {
    const i = Atomics.add(control, NEXT, 1);
    if (i >= job.items) break;
    Atomics.store(control, STATUS + i, BY_HELPER);
    let result: HelperResult;
    try {
      const row = speakingIn(job.language, () => screenItem((ctx ??= screeningContext(db!, sc, job.query as ScreeningContext["q"])), i));
      result = { job: job.job, index: i, row };
    } catch (err) {
      result = { job: job.job, index: i, failed: String((err as Error)?.message ?? err) };
    }
    data.results.postMessage(result);
    Atomics.add(control, FINISHED, 1);
    Atomics.notify(control, FINISHED);
  }
}

parentPort!.on("message", (job: HelperJob) => work(job));
// Loaded and listening.
parentPort!.postMessage("ready");
