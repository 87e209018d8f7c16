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

export type FromTrainThread =
  | { type: "progress"; fraction: number; what: string }
  | { type: "done"; model: TrainedModel; slabs: { first: number | null; last: number | null; known: number; unjudged: number } }
  /** The data cannot make a model (too few slabs or affected slabs): said in words. */
  | { type: "refused"; message: string }
  | { type: "failed"; message: string; stack?: string };
