import type { Said } from "../../lib/http-error";
import type { TrainedModel } from "./model";
import type { RiskSpec } from "./training-data";

/** What the training thread is started with (workerData). */
export interface TrainThreadData {
  databaseFile: string;
  spec: RiskSpec;
  /** The training's "now": slabs cast within JUDGED_AFTER_DAYS before it count only when judged. */
  asOf: number;
  nice: number;
}

/**
 * What the training is doing, as a key of server:risk.progress and its numbers, for the main thread
 * to say in the language of the request that started the training (the thread holds no catalogues).
 */
export interface ProgressWords {
  key: string;
  values?: Record<string, number>;
}

export type FromTrainThread =
  /** `what` in English (for logs); `words` when it has a key (a step model.ts names that the thread does not know has none). */
  | { type: "progress"; fraction: number; what: string; words?: ProgressWords }
  | { type: "done"; model: TrainedModel; slabs: { first: number | null; last: number | null; known: number; unjudged: number } }
  /** The data cannot make a model (too few slabs or affected slabs): its English, and its Said (server:errors.*) for the requester's language. */
  | { type: "refused"; message: string; said: Said }
  | { type: "failed"; message: string; stack?: string };
