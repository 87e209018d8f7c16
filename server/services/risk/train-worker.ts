/**
 * The risk training thread (started by train-thread.ts, one per training): reads the judged slabs
 * from SQLite on its own connection, trains and validates the model (model.ts) and hands the result
 * back. It never writes the database: the main thread stores the version, so a thread that dies
 * leaves nothing half-written. It runs at a lower priority (nice), like the report thread, so the
 * yard and the write path get the processor first.
 */
import { parentPort, workerData } from "node:worker_threads";
import { openDatabase } from "../../db/client";
import { lowerThisThreadPriority } from "../../lib/thread-priority";
import { trainRiskModel } from "./model";
import type { FromTrainThread, TrainThreadData } from "./train-thread-protocol";
import { MIN_AFFECTED_SLABS, MIN_JUDGED_SLABS, readTrainingData } from "./training-data";

const data = workerData as TrainThreadData;
const send = (m: FromTrainThread) => parentPort!.postMessage(m);

lowerThisThreadPriority(data.nice);

const db = openDatabase(data.databaseFile);
try {
  send({ type: "progress", fraction: 0.02, what: "reading the slabs" });
  const td = readTrainingData(db.$client, data.spec, data.asOf);
  let affected = 0;
  for (let i = 0; i < td.outcome.length; i++) affected += td.outcome[i]!;
  if (td.known < MIN_JUDGED_SLABS) {
    send({ type: "refused", message: `Only ${td.known} judged slabs in the training window (at least ${MIN_JUDGED_SLABS} are needed). Widen the window.` });
  } else if (affected < MIN_AFFECTED_SLABS) {
    send({
      type: "refused",
      message: `Only ${affected} of the ${td.known} judged slabs in the window carry this defect (at least ${MIN_AFFECTED_SLABS} are needed to learn and to validate). Widen the window or choose a category.`,
    });
  } else {
    send({ type: "progress", fraction: 0.1, what: "choosing the penalty" });
    const model = trainRiskModel(td, { knots: data.spec.knots, progress: (f, what) => send({ type: "progress", fraction: 0.1 + 0.88 * f, what }) });
    if (!model.converged)
      send({
        type: "refused",
        message: `The model could not be fitted on these slabs. ${model.validation.notes.join(" ")} Choose fewer conditions or a longer window.`,
      });
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
