/**
 * A screening helper thread (started by screening-threads.ts): takes a screening's tests from the
 * shared counter until none is left, works each with the same code as the calling thread, and sends
 * each row back on its own port. The facts, the scope's rows and the affected slabs are the
 * caller's, on shared memory, and so are its numbering of the scope's heats and its grids of the
 * categorical adjustment terms (taken as this thread's own); the database (its own read-only connection, for the names of
 * categories) is the caller's file. A helper that fails a test takes no more of that screening:
 * the caller works the rest.
 */
import { parentPort, workerData } from "node:worker_threads";
import { openDatabaseReadOnly } from "../../db/client";
import { lowerThisThreadPriority } from "../../lib/thread-priority";
import { speakingIn } from "../../lib/words";
import type { SlabFacts } from "../report-cache-columns";
import { screenItem, screeningContext, type ScreeningContext } from "./screening";
import { markDefaulted } from "../report-thread-protocol";
import { adoptHeatNumbering, forgetHeatNumbering, heatNumberingsSoFar } from "./adjusted";
import { FINISHED, NEXT, type HelperData, type HelperJob, type HelperResult } from "./screening-threads";

const data = workerData as HelperData;
lowerThisThreadPriority(data.nice);

let db: ReturnType<typeof openDatabaseReadOnly> | null = null;
let dbFile: string | null = null;

function connection(file: string) {
  if (db && dbFile !== file) {
    db.$client.close();
    db = null;
  }
  if (!db) {
    db = openDatabaseReadOnly(file);
    dbFile = file;
  }
  return db;
}

/** The screening's context, with the caller's grids of the adjustment terms taken as their own. */
function context(job: HelperJob, sc: ScreeningContext["sc"]): ScreeningContext {
  const ctx = screeningContext(connection(job.databaseFile), sc, job.query as ScreeningContext["q"]);
  ctx.adjust.forEach((t, k) => {
    const grid = job.grids[k];
    if (grid) t.grid = grid;
  });
  return ctx;
}

function work(job: HelperJob) {
  const facts: SlabFacts = { ...job.facts, indexOf: new Int32Array(0) };
  const sc = { facts, rows: job.rows, affected: job.affected };
  if (job.heats) adoptHeatNumbering(sc, job.heats);
  markDefaulted(job.query, job.defaulted);
  let ctx: ScreeningContext | null = null;
  const { control } = job;
  try {
    for (;;) {
      const i = Atomics.add(control, NEXT, 1);
      if (i >= job.items) break;
      let result: HelperResult;
      const before = heatNumberingsSoFar();
      try {
        const row = speakingIn(job.language, () => screenItem((ctx ??= context(job, sc)), i));
        // Heat numberings and grids of the categorical adjustment terms made here instead of taken from the caller.
        const ownGrids = ctx!.adjust.filter((t, k) => t.kind === "categorical" && t.grid !== undefined && t.grid !== job.grids[k]).length;
        result = { job: job.job, index: i, row, scopeWork: heatNumberingsSoFar() - before + ownGrids };
      } catch (err) {
        result = { job: job.job, index: i, failed: String((err as Error)?.message ?? err) };
      }
      data.results.postMessage(result);
      Atomics.add(control, FINISHED, 1);
      Atomics.notify(control, FINISHED);
      if ("failed" in result) break;
    }
  } finally {
    // Nothing of this screening's facts is kept until the next one (they may be replaced meanwhile).
    forgetHeatNumbering();
  }
}

parentPort!.on("message", (job: HelperJob) => work(job));
// Loaded and listening.
parentPort!.postMessage("ready");
