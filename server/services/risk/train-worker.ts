/**
 * The risk training thread (started by train-thread.ts, one per training): reads the judged slabs
 * from SQLite on its own connection, trains and validates the model (model.ts) and hands the result
 * back. It never writes the database: the main thread stores the version, so a thread that dies
 * leaves nothing half-written. It runs at a lower priority (nice), like the report thread, so the
 * yard and the write path get the processor first.
 */
import { parentPort, workerData } from "node:worker_threads";
import { openDatabase } from "../../db/client";
import { figure, said, sayIn, type Said } from "../../lib/http-error";
import { lowerThisThreadPriority } from "../../lib/thread-priority";
import { trainRiskModel } from "./model";
import type { FromTrainThread, ProgressWords, TrainThreadData } from "./train-thread-protocol";
import { MIN_AFFECTED_SLABS, MIN_JUDGED_SLABS, readTrainingData } from "./training-data";

const data = workerData as TrainThreadData;
const send = (m: FromTrainThread) => parentPort!.postMessage(m);
/** A refusal: its English (from the English catalogue: this thread has no translator) and its Said. */
const refuse = (s: Said) => send({ type: "refused", message: sayIn(s, "en"), said: s });
/** Progress in English (for logs) and as a key of server:risk.progress (for the screen). */
const progress = (fraction: number, what: string, words?: ProgressWords) => send({ type: "progress", fraction, what, ...(words ? { words } : {}) });

lowerThisThreadPriority(data.nice);

const db = openDatabase(data.databaseFile);
try {
  progress(0.02, "reading the slabs", { key: "reading" });
  const td = readTrainingData(db.$client, data.spec, data.asOf);
  let affected = 0;
  for (let i = 0; i < td.outcome.length; i++) affected += td.outcome[i]!;
  if (td.known < MIN_JUDGED_SLABS) {
    refuse(said("risk.tooFewJudged", { known: figure(td.known), min: figure(MIN_JUDGED_SLABS) }));
  } else if (affected < MIN_AFFECTED_SLABS) {
    refuse(said("risk.tooFewAffected", { affected: figure(affected), known: figure(td.known), min: figure(MIN_AFFECTED_SLABS) }));
  } else {
    progress(0.1, "choosing the penalty", { key: "penalty" });
    const model = trainRiskModel(td, { knots: data.spec.knots, progress: (f, what, words) => progress(0.1 + 0.88 * f, what, words) });
    // The validation's notes come from model.ts in English: they go into the sentence as they are.
    if (!model.converged) refuse(said("risk.notFitted", { notes: model.validation.notes.join(" ") }));
    else
      send({
        type: "done",
        model,
        slabs: { first: td.known ? td.castAt[0]! : null, last: td.known ? td.castAt[td.known - 1]! : null, known: td.known, unjudged: td.unjudged },
      });
  }
} catch (err) {
  const e = err as Error;
  send({ type: "failed", message: e?.message ?? String(err), stack: e?.stack });
} finally {
  db.$client.close();
}
