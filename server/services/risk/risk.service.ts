/**
 * Slab risk before inspection (issue 15): model versions (train, list, switch on), scoring of slabs by
 * the active models, and the ranked list of slabs.
 *
 * Training runs in a thread of its own (train-worker.ts) at a lower priority; the request that asked
 * for it waits for the answer while the server goes on answering everyone else, and the version's
 * row shows the progress to anyone who looks (GET /api/risk-models). One training at a time.
 *
 * Scoring: the slabs an import or feed call has written are scored right after (those cast in the
 * last YARD_UNINSPECTED_MAX_DAYS); when a model is switched on and at every start, every slab of those
 * days with no risk under an active model is. Because the start's rule is "whatever has no score yet",
 * a crash between an import and its scoring leaves nothing unscored after the restart.
 */
import { Worker } from "node:worker_threads";
import type { Db } from "../../db/client";
import { databaseIdOf } from "../../db/identity";
import { HttpError, said, sayIn, valuesIn, type SaidValues } from "../../lib/http-error";
import type { Logger } from "../../lib/logger";
import { threadEntry } from "../../lib/paths";
import { recordAudit } from "../audit.service";
import { VARIABLES } from "@shared/variables";
import {
  RISK_CATEGORY_LABELS,
  type RiskBand,
  type RiskModel,
  type RiskReason,
  type SlabRisk,
  type SlabRiskBrief,
  type TrainRiskModelBody,
} from "@shared/api/risk";
import { YARD_UNINSPECTED_MAX_DAYS } from "@shared/api/yard";
import { bandOf } from "./bands";
import { categoryName, scoreTerms, trainRiskModel, type ModelTerms, type TrainedModel } from "./model";
import type { FromTrainThread, ProgressWords, TrainThreadData } from "./train-thread-protocol";
import { MIN_AFFECTED_SLABS, MIN_JUDGED_SLABS, readTrainingData, slabInputs, type RiskCategory, type RiskSpec } from "./training-data";
import { currentLanguage, dec, named, say } from "../../lib/words";
import { translator } from "../../lib/i18n";

/**
 * A text stored with a model — its progress, why it failed — as a catalogue key and its values
 * (`{"key":…,"values":…}`), said when read in the reader's language. A row written before holds its
 * English words: shown as they are.
 */
const storeWords = (key: string, values: SaidValues = {}) => JSON.stringify({ key, values });
function storedWords(text: string | null): string | null {
  if (!text?.startsWith('{"key":')) return text;
  try {
    const { key, values } = JSON.parse(text) as { key: string; values: SaidValues };
    const t = translator(currentLanguage());
    return t(key, valuesIn(values, currentLanguage(), t));
  } catch {
    return text;
  }
}

const DAY = 86_400_000;
/** A training that has not finished after this long is stopped (a million slabs take ≈ 20 s). */
const TRAIN_TIMEOUT_MS = 15 * 60_000;
/** The reasons kept per slab: the terms that raise its risk most. */
const REASONS_KEPT = 3;

interface Row {
  id: number;
  target_kind: "type" | "category";
  target_code: string;
  version: number;
  spec: string;
  status: "training" | "ready" | "failed";
  progress: number;
  progress_text: string | null;
  error: string | null;
  terms: string | null;
  lambda: number | null;
  effective_df: number | null;
  validation: string | null;
  method: string | null;
  beats_baseline: number;
  active: number;
  train_from: number | null;
  train_to: number | null;
  trained_by_name: string | null;
  created_at: number;
  finished_at: number | null;
  band_high: number | null;
  band_raised: number | null;
  activated_at: number | null;
  activated_by_name: string | null;
}

const iso = (ms: number | null | undefined) => (ms === null || ms === undefined ? null : new Date(ms).toISOString());
const variable = (key: string) => VARIABLES.find((v) => v.key === key);

/** The defect type or category a code names (case as stored), or null. */
function targetOf(db: Db, kind: "type" | "category", code: string): { code: string; name: string } | null {
  const table = kind === "type" ? "defect_types" : "defect_categories";
  return (db.$client.prepare(`select code, name from ${table} where upper(code) = upper(?)`).get(code) as { code: string; name: string } | undefined) ?? null;
}
const targetName = (db: Db, kind: "type" | "category", code: string) => targetOf(db, kind, code)?.name ?? null;

function toModel(db: Db, r: Row, withTerms: boolean): RiskModel {
  const spec = JSON.parse(r.spec) as RiskSpec;
  const terms = r.terms ? (JSON.parse(r.terms) as ModelTerms) : null;
  const stored = r.validation ? (JSON.parse(r.validation) as TrainedModel["validation"]) : null;
  // The method and notes in the reader's language where the version was trained with them (English as stored otherwise).
  const inLanguage = stored?.words?.[currentLanguage()];
  // A version trained before the words were kept per language says so, in the reader's language, above its English notes.
  const englishOnly = stored && !inLanguage && currentLanguage() !== "en" ? [say("riskModel.wordsInEnglish")] : [];
  const validation = stored ? { ...stored, notes: [...englishOnly, ...(inLanguage?.notes ?? stored.notes)], words: undefined } : null;
  return {
    id: r.id,
    targetKind: r.target_kind,
    targetCode: r.target_code,
    targetName: targetName(db, r.target_kind, r.target_code) ?? r.target_code,
    version: r.version,
    status: r.status,
    progress: r.progress,
    progressText: storedWords(r.progress_text),
    error: storedWords(r.error),
    conditions: spec.conditions.map((k) => ({ key: k, label: variable(k)?.label ?? k, unit: variable(k)?.unit ?? null })),
    categories: spec.categories.map((k) => ({ key: k, label: RISK_CATEGORY_LABELS[k] })),
    knots: spec.knots,
    trainFrom: iso(r.train_from),
    trainTo: iso(r.train_to),
    lambda: r.lambda,
    effectiveDf: r.effective_df,
    validation: validation ? { ...validation, splitAt: iso(validation.splitAt) } : null,
    bands: r.band_high !== null && r.band_raised !== null ? { high: r.band_high, raised: r.band_raised } : null,
    beatsBaseline: r.beats_baseline === 1,
    active: r.active === 1,
    method: inLanguage?.method ?? r.method,
    terms: withTerms && terms ? terms.columns.map((column, j) => ({ column, coefficient: terms.coefficients[j + 1]! })) : [],
    trainedByName: r.trained_by_name,
    createdAt: iso(r.created_at)!,
    finishedAt: iso(r.finished_at),
    activatedAt: iso(r.activated_at),
    activatedByName: r.activated_by_name,
  };
}

function rowOf(db: Db, id: number): Row {
  const r = db.$client.prepare("select * from risk_models where id = ?").get(id) as Row | undefined;
  if (!r) throw new HttpError(404, "not_found", said("risk.noModel", { id }));
  return r;
}

export function listRiskModels(db: Db) {
  const rows = db.$client.prepare("select * from risk_models order by target_kind, target_code, version desc").all() as Row[];
  return {
    items: rows.map((r) => {
      const { terms: _t, ...m } = toModel(db, r, false);
      return m;
    }),
  };
}

export const getRiskModel = (db: Db, id: number) => toModel(db, rowOf(db, id), true);

/** Trainings in flight, per database file: one at a time. */
const training = new Set<string>();

export interface RiskOptions {
  logger?: Logger;
  /** The training thread's nice value (default 10). */
  nice?: number;
  /** The training's "now" (tests). */
  asOf?: number;
}

/** Trains a new version in the training thread; resolves with the stored version once it has finished. */
export async function trainRiskModelVersion(
  db: Db,
  body: Required<Pick<TrainRiskModelBody, "targetKind" | "targetCode">> & TrainRiskModelBody,
  user: { id: string; name: string },
  opts: RiskOptions = {},
): Promise<RiskModel> {
  const kind = body.targetKind;
  const target = targetOf(db, kind, body.targetCode);
  if (!target)
    throw new HttpError(400, "unknown_target", said(kind === "type" ? "risk.noDefectType" : "risk.noDefectCategory", { code: body.targetCode }), {
      field: "targetCode",
    });
  const code = target.code;
  const file = db.$client.name;
  if (training.has(file)) throw new HttpError(409, "training_busy", said("risk.trainingBusy"));
  const spec: RiskSpec = {
    targetKind: kind,
    targetCode: code,
    conditions: body.conditions ?? [],
    categories: (body.categories ?? ["grade_family"]) as RiskCategory[],
    knots: (body.knots ?? 4) as 3 | 4 | 5,
    from: body.from ? Date.parse(`${body.from}T00:00:00Z`) : undefined,
    to: body.to ? Date.parse(`${body.to}T23:59:59.999Z`) : undefined,
  };
  training.add(file);
  // The progress is stored as its catalogue key, and said in each reader's language on the list of models.
  const progressText = (what: string, words?: ProgressWords) => (words ? storeWords(`server:risk.progress.${words.key}`, words.values) : what);
  let id: number;
  try {
    id = db.$client.transaction(() => {
      const version =
        ((db.$client.prepare("select max(version) from risk_models where target_kind = ? and target_code = ?").pluck().get(kind, code) as number | null) ?? 0) +
        1;
      return Number(
        db.$client
          .prepare(
            "insert into risk_models (target_kind, target_code, version, spec, status, progress, progress_text, trained_by, trained_by_name) values (?, ?, ?, ?, 'training', 0, ?, ?, ?)",
          )
          .run(kind, code, version, JSON.stringify(spec), progressText("starting", { key: "starting" }), user.id, user.name).lastInsertRowid,
      );
    })();
  } catch (err) {
    training.delete(file);
    throw err;
  }
  try {
    const outcome = await runTrainingThread({ databaseFile: file, spec, asOf: opts.asOf ?? Date.now(), nice: opts.nice ?? 10 }, (fraction, what, words) => {
      db.$client
        .prepare("update risk_models set progress = ?, progress_text = ? where id = ? and status = 'training'")
        .run(Math.min(1, fraction), progressText(what, words), id);
    });
    if (outcome.type === "done") {
      storeTrained(db, id, spec, outcome.model, outcome.slabs, { userId: user.id });
      return getRiskModel(db, id);
    }
    // Why, stored as its catalogue key (said in each reader's language on the list); a failure's own detail stays as the thread wrote it.
    const why = outcome.type === "refused" ? outcome.said : said("risk.failedBecause", { detail: outcome.message });
    db.$client
      .prepare("update risk_models set status = 'failed', progress_text = null, error = ?, finished_at = ? where id = ?")
      .run(storeWords(`server:errors.${why.key}`, why.values), Date.now(), id);
    if (outcome.type === "refused") throw new HttpError(422, "too_little_data", outcome.said, { modelId: id });
    opts.logger?.error({ err: outcome }, "risk model training failed");
    throw new HttpError(500, "training_failed", said("risk.trainingFailed", { message: sayIn(why, currentLanguage()) }), {
      modelId: id,
    });
  } finally {
    training.delete(file);
  }
}

/** Writes a finished training into its version's row, audited. */
function storeTrained(
  db: Db,
  id: number,
  spec: RiskSpec,
  m: TrainedModel,
  slabs: { first: number | null; last: number | null },
  who: { userId?: string; actor?: string },
) {
  db.$client.transaction(() => {
    db.$client
      .prepare(
        `update risk_models set status = 'ready', progress = 1, progress_text = null, terms = ?, lambda = ?, effective_df = ?, validation = ?, method = ?,
           beats_baseline = ?, train_from = ?, train_to = ?, band_high = ?, band_raised = ?, finished_at = ? where id = ?`,
      )
      .run(
        JSON.stringify(m.terms),
        m.lambda,
        m.effectiveDf,
        JSON.stringify(m.validation),
        m.method,
        m.beatsBaseline ? 1 : 0,
        slabs.first,
        slabs.last,
        m.bands?.high ?? null,
        m.bands?.raised ?? null,
        Date.now(),
        id,
      );
    recordAudit(db, {
      ...who,
      action: "risk_model.train",
      entity: "risk_models",
      entityId: id,
      after: {
        target: `${spec.targetKind} ${spec.targetCode}`,
        spec,
        auc: m.validation.auc,
        baselineAuc: m.validation.baselineAuc,
        beatsBaseline: m.beatsBaseline,
      },
    });
  })();
}

/**
 * The demo plant's models, trained in-process by the seed (the running server trains in its thread):
 * slag spots (which beat the grade-family baseline on the demo history and are switched on) and
 * longitudinal facial cracks (which do not: the grade family already says most of it).
 */
export function seedRiskModels(db: Db, trainedBy: { id: string; name: string }, now = Date.now()) {
  const conditions = ["casting_speed_m_min", "superheat_c", "embr_current_a", "sen_depth_mm", "argon_nl_min", "mold_level_sd_mm"];
  const made: { target: string; auc: number | null; baselineAuc: number | null; active: boolean }[] = [];
  for (const code of ["SLG", "LFC"]) {
    const spec: RiskSpec = { targetKind: "type", targetCode: code, conditions, categories: ["grade_family", "strand"], knots: 4 };
    const data = readTrainingData(db.$client, spec, now);
    let affected = 0;
    for (let i = 0; i < data.known; i++) affected += data.outcome[i]!;
    if (data.known < MIN_JUDGED_SLABS || affected < MIN_AFFECTED_SLABS) continue;
    const model = trainRiskModel(data, { knots: 4 });
    if (!model.converged) continue;
    const id = Number(
      db.$client
        .prepare(
          "insert into risk_models (target_kind, target_code, version, spec, status, trained_by, trained_by_name, created_at) values ('type', ?, 1, ?, 'training', ?, ?, ?)",
        )
        .run(code, JSON.stringify(spec), trainedBy.id, trainedBy.name, now).lastInsertRowid,
    );
    storeTrained(
      db,
      id,
      spec,
      model,
      { first: data.known ? data.castAt[0]! : null, last: data.known ? data.castAt[data.known - 1]! : null },
      { actor: "seed" },
    );
    const active = model.beatsBaseline && code === "SLG";
    if (active) {
      switchOn(db, id, trainedBy);
      scoreUnscoredSlabs(db, now);
    }
    made.push({ target: code, auc: model.validation.auc, baselineAuc: model.validation.baselineAuc, active });
  }
  return made;
}

function runTrainingThread(
  data: TrainThreadData,
  progress: (fraction: number, what: string, words?: ProgressWords) => void,
): Promise<Exclude<FromTrainThread, { type: "progress" }>> {
  return new Promise((resolve) => {
    const w = new Worker(threadEntry("risk-train.js", "./train-thread-entry.mjs", import.meta.url), {
      workerData: data,
      resourceLimits: { maxOldGenerationSizeMb: 1536 },
    });
    let settled = false;
    let lastProgress = 0;
    const settle = (m: Exclude<FromTrainThread, { type: "progress" }>) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      resolve(m);
    };
    const timer = setTimeout(() => {
      settle({ type: "failed", message: `it took longer than ${TRAIN_TIMEOUT_MS / 60_000} minutes and was stopped` });
      void w.terminate();
    }, TRAIN_TIMEOUT_MS);
    w.on("message", (m: FromTrainThread) => {
      if (m.type === "progress") {
        const now = Date.now();
        if (now - lastProgress >= 200) {
          lastProgress = now;
          progress(m.fraction, m.what, m.words);
        }
      } else settle(m);
    });
    w.on("error", (err) =>
      settle({
        type: "failed",
        message:
          (err as NodeJS.ErrnoException).code === "ERR_WORKER_OUT_OF_MEMORY"
            ? "the training needed more memory than it may use; narrow the window"
            : err.message,
      }),
    );
    w.on("exit", (code) => settle({ type: "failed", message: `the training thread stopped (exit ${code})` }));
  });
}

/** At start: a version left "training" by a stopped server says so. */
export function recoverRiskTraining(db: Db) {
  db.$client
    .prepare(
      "update risk_models set status = 'failed', progress_text = null, error = 'The server stopped while this model was training. Train it again.', finished_at = ? where status = 'training'",
    )
    .run(Date.now());
}

/** Switches a version on for its target (the one before goes off), audited; then scores the recent slabs, yielding between chunks. */
export async function activateRiskModel(db: Db, id: number, user: { id: string; name: string }, now = Date.now()): Promise<RiskModel> {
  switchOn(db, id, user);
  await scoreUnscoredSlabsYielding(db, now);
  return getRiskModel(db, id);
}

/** The switch itself: refused unless the version is trained and beats its baseline. */
function switchOn(db: Db, id: number, user: { id: string; name: string }) {
  const r = rowOf(db, id);
  if (r.status !== "ready")
    throw new HttpError(409, "model_not_ready", said(r.status === "training" ? "risk.stillTraining" : "risk.trainingFailedCannotSwitch"));
  if (r.beats_baseline !== 1) throw new HttpError(409, "does_not_beat_baseline", said("risk.doesNotBeatBaseline"));
  db.$client.transaction(() => {
    const before = db.$client
      .prepare("select id, version from risk_models where target_kind = ? and target_code = ? and active = 1")
      .get(r.target_kind, r.target_code) as { id: number; version: number } | undefined;
    db.$client.prepare("update risk_models set active = 0 where target_kind = ? and target_code = ? and active = 1").run(r.target_kind, r.target_code);
    db.$client.prepare("update risk_models set active = 1, activated_at = ?, activated_by_name = ? where id = ?").run(Date.now(), user.name, id);
    recordAudit(db, {
      userId: user.id,
      action: "risk_model.activate",
      entity: "risk_models",
      entityId: id,
      before: before ? { activeModel: before.id, version: before.version } : { activeModel: null },
      after: { activeModel: id, version: r.version, target: `${r.target_kind} ${r.target_code}` },
    });
  })();
}

const anyActiveModel = (db: Db) => db.$client.prepare("select 1 from risk_models where active = 1 limit 1").get() !== undefined;

interface ActiveModel {
  id: number;
  terms: ModelTerms;
}

function activeModels(db: Db): ActiveModel[] {
  const rows = db.$client.prepare("select id, terms from risk_models where active = 1 and status = 'ready'").all() as { id: number; terms: string }[];
  return rows.map((r) => ({ id: r.id, terms: JSON.parse(r.terms) as ModelTerms }));
}

const fmt = (value: number, digits: number) => dec(value, Math.max(0, Math.min(6, digits)));

/** A reason in words: "Casting speed 1.72 m/min (typical 1.40)". */
function reasonText(r: { variable: string; label: string; value: number | string | null; unit: string | null }, terms: ModelTerms): string {
  const num = terms.numeric.find((v) => v.key === r.variable);
  if (num) {
    const digits = variable(r.variable)?.digits ?? 2;
    const unit = r.unit ? ` ${r.unit}` : "";
    if (r.value === null || typeof r.value !== "number") return say("risk.notRecorded", { name: named(r.label), typical: fmt(num.median, digits), unit });
    return say("risk.value", { name: named(r.label), value: fmt(r.value, digits), typical: fmt(num.median, digits), unit });
  }
  const cat = terms.categorical.find((c) => c.key === r.variable);
  // The level in the reader's words where it is one of ours ("1st heat", "CC1 strand 2"); a grade as it is.
  const value = r.value !== null ? named(String(r.value)) : say("risk.unknown");
  return cat
    ? say("risk.categoryCommon", { name: named(r.label), value, common: named(cat.referenceName) })
    : say("risk.category", { name: named(r.label), value });
}

/**
 * A reason as stored with a slab's risk: [condition key, the slab's value, contribution] — the label,
 * unit and words are rebuilt from the model's terms when read (expandReasons), which keeps each row
 * short (scoring 10,000 imported slabs writes 10,000 rows inside the import's answer).
 */
type StoredReason = [variable: string, value: number | string | null, contribution: number];

const short = (x: number) => Number(x.toPrecision(6));

/** Stored reasons in full (older rows hold them in full already). */
function expandReasons(terms: ModelTerms, stored: unknown): RiskReason[] {
  if (!Array.isArray(stored)) return [];
  return stored.map((r: StoredReason | RiskReason) => {
    // Older rows hold them in full, their words in English: said again in the reader's language.
    if (!Array.isArray(r)) return { ...r, text: reasonText(r, terms) };
    const [key, value, contribution] = r;
    const num = terms.numeric.find((v) => v.key === key);
    const cat = num ? undefined : terms.categorical.find((c) => c.key === key);
    const reason = { variable: key, label: num?.label ?? cat?.label ?? key, value, unit: num?.unit ?? null, contribution };
    return { ...reason, text: reasonText(reason, terms) };
  });
}

/** Parsed terms of each version (a version's terms never change once trained, ids are never reused), by database and id. */
const termsCache = new Map<string, ModelTerms>();
function termsOf(db: Db, modelId: number): ModelTerms | null {
  const key = `${databaseIdOf(db.$client)}#${modelId}`;
  let t = termsCache.get(key);
  if (!t) {
    const raw = db.$client.prepare("select terms from risk_models where id = ? and status = 'ready'").pluck().get(modelId) as string | undefined;
    if (!raw) return null;
    termsCache.set(key, (t = JSON.parse(raw) as ModelTerms));
  }
  return t;
}
const readReasons = (db: Db, modelId: number, json: string) => {
  const terms = termsOf(db, modelId);
  return terms ? expandReasons(terms, JSON.parse(json)) : [];
};

/** Risk and the reasons to store of slabs under one model, from their stored conditions. */
function scoreWith(db: Db, model: ActiveModel, slabIds: number[]): { slabId: number; risk: number; reasons: StoredReason[] }[] {
  const inputs = slabInputs(
    db.$client,
    model.terms.numeric.map((v) => v.key),
    model.terms.categorical.map((c) => c.key as RiskCategory),
    slabIds,
  );
  const out: { slabId: number; risk: number; reasons: StoredReason[] }[] = [];
  const { numeric, categorical } = model.terms;
  const nn = numeric.length;
  const contributions = new Float64Array(nn + categorical.length);
  const used = new Uint8Array(contributions.length);
  const buf: number[] = [];
  for (const id of slabIds) {
    const input = inputs.get(id);
    if (!input) continue;
    const risk = scoreTerms(model.terms, input.numeric, input.categorical, contributions, buf);
    // The few largest contributions that raise the risk, largest first (the same order as explain's).
    const kept: StoredReason[] = [];
    used.fill(0);
    while (kept.length < REASONS_KEPT) {
      let best = -1;
      for (let j = 0; j < contributions.length; j++)
        if (!used[j] && contributions[j]! > 1e-9 && (best < 0 || contributions[j]! > contributions[best]!)) best = j;
      if (best < 0) break;
      used[best] = 1;
      if (best < nn) {
        const value = input.numeric[best];
        kept.push([numeric[best]!.key, typeof value === "number" ? short(value) : null, short(contributions[best]!)]);
      } else {
        const cat = categorical[best - nn]!;
        kept.push([cat.key, categoryName(cat, input.categorical[best - nn]), short(contributions[best]!)]);
      }
    }
    out.push({ slabId: id, risk, reasons: kept });
  }
  return out;
}

/**
 * Scores, under every active model, the slabs cast in the last YARD_UNINSPECTED_MAX_DAYS that have no
 * risk under it yet. Chunks of 2,000 slabs, a transaction each; yields the count after each chunk, so a
 * caller can let the server answer others between chunks (scoreUnscoredSlabsYielding).
 */
function* scoringChunks(db: Db, now: number, only?: number[]): Generator<number> {
  const c = db.$client;
  // "or ignore": a slab scored meanwhile by another pass (an import during a switching on) got the same answer.
  const insert = c.prepare("insert or ignore into slab_risks (slab_id, model_id, risk, reasons, scored_at) values (?, ?, ?, ?, ?)");
  for (const m of activeModels(db)) {
    // The named slabs (just arrived: looked up by id, not found by scanning the recent ones), else every unscored recent slab.
    const ids = (
      only
        ? c
            .prepare(
              `select s.id from json_each(?) j cross join slabs s on s.id = j.value cross join slab_conditions c on c.slab_id = s.id where s.cast_at >= ?
                 and not exists (select 1 from slab_risks r where r.slab_id = s.id and r.model_id = ?)`,
            )
            .pluck()
            .all(JSON.stringify(only), now - YARD_UNINSPECTED_MAX_DAYS * DAY, m.id)
        : c
            .prepare(
              `select s.id from slabs s join slab_conditions c on c.slab_id = s.id where s.cast_at >= ?
                 and not exists (select 1 from slab_risks r where r.slab_id = s.id and r.model_id = ?)`,
            )
            .pluck()
            .all(now - YARD_UNINSPECTED_MAX_DAYS * DAY, m.id)
    ) as number[];
    for (let i = 0; i < ids.length; i += 2000) {
      const chunk = scoreWith(db, m, ids.slice(i, i + 2000));
      const at = Date.now();
      c.transaction(() => {
        for (const s of chunk) insert.run(s.slabId, m.id, s.risk, JSON.stringify(s.reasons), at);
      })();
      yield chunk.length;
    }
  }
}

/**
 * Scores every unscored recent slab at once — or only the named ones (an import's slabs, scored
 * before it answers; anything else left unscored is found by the pass at start). Returns the count.
 */
export function scoreUnscoredSlabs(db: Db, now = Date.now(), only?: number[]): number {
  let scored = 0;
  for (const n of scoringChunks(db, now, only)) scored += n;
  return scored;
}

/**
 * The same, giving the event loop back after every chunk: switching a model on scores 90 days of slabs
 * (tens of thousands at a large plant), and the yard and everyone else are answered in between.
 */
export async function scoreUnscoredSlabsYielding(db: Db, now = Date.now()): Promise<number> {
  let scored = 0;
  for (const n of scoringChunks(db, now)) {
    scored += n;
    await new Promise((resolve) => setImmediate(resolve));
  }
  return scored;
}

/**
 * Slabs whose conditions changed (a re-import): their stored risks go, to be scored again. A change of
 * everything (null) takes those of the last YARD_UNINSPECTED_MAX_DAYS (scored again at once); older
 * slabs keep the risk they were scored with.
 */
function forgetRisks(db: Db, slabIds: number[] | null, now = Date.now()) {
  if (slabIds === null) {
    db.$client.prepare("delete from slab_risks where slab_id in (select id from slabs where cast_at >= ?)").run(now - YARD_UNINSPECTED_MAX_DAYS * DAY);
    return;
  }
  const del = db.$client.prepare("delete from slab_risks where slab_id in (select value from json_each(?))");
  for (let i = 0; i < slabIds.length; i += 5000) del.run(JSON.stringify(slabIds.slice(i, i + 5000)));
}

export interface RiskSlabsQuery {
  defectType?: string;
  from?: string;
  to?: string;
  uninspected?: "true" | "false";
  band?: RiskBand;
  limit: number;
}

const UNINSPECTED =
  "not exists (select 1 from defects d where d.slab_id = s.id and d.deleted_at is null) and not exists (select 1 from products p where p.slab_id = s.id)";

/** The slabs ranked by risk under the active models (optionally for one defect type). */
export function riskSlabs(db: Db, q: RiskSlabsQuery) {
  const where = ["m.active = 1"];
  const params: Record<string, unknown> = { limit: q.limit };
  if (q.defectType) {
    const type = db.$client
      .prepare("select t.code, c.code as category from defect_types t join defect_categories c on c.id = t.category_id where upper(t.code) = upper(?)")
      .get(q.defectType) as { code: string; category: string } | undefined;
    if (!type) throw new HttpError(400, "unknown_defect_type", said("risk.noDefectType", { code: q.defectType }), { field: "defectType" });
    where.push("((m.target_kind = 'type' and m.target_code = @type) or (m.target_kind = 'category' and m.target_code = @category))");
    params.type = type.code;
    params.category = type.category;
  }
  if (q.from) {
    where.push("s.cast_at >= @from");
    params.from = Date.parse(`${q.from}T00:00:00Z`);
  }
  if (q.to) {
    where.push("s.cast_at <= @to");
    params.to = Date.parse(`${q.to}T23:59:59.999Z`);
  }
  if (q.uninspected === "true") where.push(UNINSPECTED);
  if (q.uninspected === "false") where.push(`not (${UNINSPECTED})`);
  if (q.band === "high") where.push("m.band_high is not null and r.risk >= m.band_high");
  if (q.band === "raised") where.push("m.band_raised is not null and r.risk >= m.band_raised and (m.band_high is null or r.risk < m.band_high)");
  if (q.band === "usual") where.push("(m.band_raised is null or r.risk < m.band_raised)");
  const from = `from slab_risks r join risk_models m on m.id = r.model_id join slabs s on s.id = r.slab_id where ${where.join(" and ")}`;
  const c = db.$client;
  const matched = c.prepare(`select count(*) ${from}`).pluck().get(params) as number;
  const rows = c
    .prepare(
      `select s.slab_id as slabId, h.heat_no as heatNo, s.cast_at as castAt, r.risk, r.reasons, m.id as modelId, m.version, m.target_kind as kind, m.target_code as code,
         m.band_high as high, m.band_raised as raised, (${UNINSPECTED}) as uninspected
       from (select r.slab_id, r.model_id ${from} order by r.risk desc, r.slab_id limit @limit) k
       cross join slab_risks r on r.slab_id = k.slab_id and r.model_id = k.model_id cross join risk_models m on m.id = r.model_id
       cross join slabs s on s.id = r.slab_id cross join heats h on h.id = s.heat_id
       order by r.risk desc, s.id`,
    )
    .all(params) as {
    slabId: string;
    heatNo: string;
    castAt: number | null;
    risk: number;
    reasons: string;
    modelId: number;
    version: number;
    kind: string;
    code: string;
    high: number | null;
    raised: number | null;
    uninspected: number;
  }[];
  const models = (
    c.prepare("select id, target_kind as kind, target_code as code, version from risk_models where active = 1 order by target_code").all() as {
      id: number;
      kind: "type" | "category";
      code: string;
      version: number;
    }[]
  ).map((m) => ({ id: m.id, target: targetName(db, m.kind, m.code) ?? m.code, version: m.version }));
  const targetOfModel = new Map(models.map((m) => [m.id, m.target]));
  const items: SlabRisk[] = rows.map((r) => ({
    slabId: r.slabId,
    heatNo: r.heatNo,
    castAt: iso(r.castAt),
    risk: r.risk,
    band: bandOf(r.risk, r.high, r.raised),
    reasons: readReasons(db, r.modelId, r.reasons),
    modelId: r.modelId,
    modelVersion: r.version,
    target: targetOfModel.get(r.modelId) ?? r.code,
    uninspected: r.uninspected === 1,
  }));
  return { items, matched, models };
}

/**
 * Scoring on arrival: after slab conditions change (an import, a feed call, a re-resolve), the changed
 * slabs' old risks go and those of them cast in the last 90 days are scored — at once when the change is told
 * outside a transaction (an import thread's, told when it has committed: the import answers after its
 * slabs are scored), else right after the transaction (setImmediate). A change of everything (a
 * calibration, grade families) scores the slabs of the last 90 days again, a chunk at a time; older slabs keep their risk.
 */
export function scoreOnArrival(db: Db, logger?: Logger) {
  let pending: { all: boolean; ids: Set<number> } | null = null;
  const run = () => {
    const p = pending;
    pending = null;
    if (!p) return;
    try {
      if (!anyActiveModel(db)) return;
      const t0 = performance.now();
      const ids = p.all ? null : [...p.ids];
      db.$client.transaction(() => forgetRisks(db, ids))();
      const done = (n: number) => n && logger?.info({ scored: n, ms: Math.round(performance.now() - t0) }, "slabs scored by the active risk models");
      // A change of everything re-scores 90 days of slabs: a chunk at a time, the server answering between chunks.
      if (ids === null)
        void scoreUnscoredSlabsYielding(db).then(done, (err: unknown) => logger?.error({ err }, "risk scoring failed; the slabs are scored at the next start"));
      else done(scoreUnscoredSlabs(db, Date.now(), ids));
    } catch (err) {
      logger?.error({ err }, "risk scoring failed; the slabs are scored at the next import or start");
    }
  };
  return (ids: number[] | null) => {
    const first = pending === null;
    pending ??= { all: false, ids: new Set() };
    if (ids === null) pending.all = true;
    else if (!pending.all) for (const id of ids) pending.ids.add(id);
    if (!db.$client.inTransaction) run();
    else if (first) setImmediate(run);
  };
}

const FACES = new Set(["inner", "outer", "left", "right"]);

/**
 * Where the defects of each active model's target usually sit, from the plant's history: the most
 * common face and third of the length (head, middle, tail) among its live entries. By model id.
 */
function usualPlaces(db: Db): Map<number, string | null> {
  const out = new Map<number, string | null>();
  const models = db.$client.prepare("select id, target_kind as kind, target_code as code from risk_models where active = 1").all() as {
    id: number;
    kind: "type" | "category";
    code: string;
  }[];
  for (const m of models) {
    const typeFilter =
      m.kind === "type"
        ? "d.type_id in (select id from defect_types where code = @code)"
        : "d.type_id in (select t.id from defect_types t join defect_categories c on c.id = t.category_id where c.code = @code)";
    const row = db.$client
      .prepare(
        `select d.face, min(2, cast(3 * d.position_along_mm / s.length_mm as integer)) as third, count(*) as n
         from defects d join slabs s on s.id = d.slab_id
         where d.deleted_at is null and ${typeFilter} and d.position_along_mm is not null and s.length_mm > 0
         group by d.face, third order by n desc limit 1`,
      )
      .get({ code: m.code }) as { face: string; third: number; n: number } | undefined;
    const total = db.$client.prepare(`select count(*) from defects d where d.deleted_at is null and ${typeFilter}`).pluck().get({ code: m.code }) as number;
    out.set(
      m.id,
      row && total >= 10
        ? say("risk.usually", {
            face: FACES.has(row.face) ? say(`risk.faces.${row.face}`) : row.face,
            third: Math.max(0, row.third) <= 2 ? say(`risk.thirds.${Math.max(0, row.third)}`) : say("risk.alongSlab"),
            pct: Math.round((100 * row.n) / total),
            total,
          })
        : null,
    );
  }
  return out;
}

/** The highest risk of each slab under the active models, for the yard set. */
export function topRiskOfSlabs(db: Db, slabRowIds: number[]) {
  const out = new Map<number, { risk: number; band: RiskBand; target: string; modelVersion: number; reasons: string[]; usualPlace: string | null }>();
  if (slabRowIds.length === 0 || !anyActiveModel(db)) return out;
  const places = usualPlaces(db);
  const names = new Map<string, string>();
  const rows = db.$client
    .prepare(
      `select r.slab_id as slab, r.risk, r.reasons, m.id as model, m.version, m.target_kind as kind, m.target_code as code, m.band_high as high, m.band_raised as raised
       from slab_risks r join risk_models m on m.id = r.model_id and m.active = 1 where r.slab_id in (select value from json_each(?))`,
    )
    .all(JSON.stringify(slabRowIds)) as {
    slab: number;
    risk: number;
    reasons: string;
    model: number;
    version: number;
    kind: "type" | "category";
    code: string;
    high: number | null;
    raised: number | null;
  }[];
  for (const r of rows) {
    const band = bandOf(r.risk, r.high, r.raised);
    const rank = (b: RiskBand) => RISK_RANK[b];
    const have = out.get(r.slab);
    // The band decides first (a high risk of a rare defect before a raised one of a common defect).
    if (have && (rank(have.band) > rank(band) || (rank(have.band) === rank(band) && have.risk >= r.risk))) continue;
    const key = `${r.kind}:${r.code}`;
    if (!names.has(key)) names.set(key, targetName(db, r.kind, r.code) ?? r.code);
    out.set(r.slab, {
      risk: r.risk,
      band,
      target: names.get(key)!,
      modelVersion: r.version,
      reasons: readReasons(db, r.model, r.reasons).map((x) => x.text),
      usualPlace: places.get(r.model) ?? null,
    });
  }
  return out;
}
const RISK_RANK: Record<RiskBand, number> = { high: 2, raised: 1, usual: 0 };

/**
 * Each slab's risk under every switched-on model, highest band (then risk) first, for the heat and
 * slab pages: the stored score where there is one, else reckoned now from the slab's conditions
 * (not stored: only the recent slabs are kept scored). By slab row id; empty lists when no model is on.
 */
export function risksOfSlabs(db: Db, slabRowIds: number[]): Map<number, SlabRiskBrief[]> {
  const out = new Map<number, SlabRiskBrief[]>(slabRowIds.map((id) => [id, []]));
  if (slabRowIds.length === 0 || !anyActiveModel(db)) return out;
  const rows = db.$client
    .prepare(
      `select id, version, target_kind as kind, target_code as code, band_high as high, band_raised as raised, terms from risk_models
       where active = 1 and status = 'ready' order by target_code`,
    )
    .all() as { id: number; version: number; kind: "type" | "category"; code: string; high: number | null; raised: number | null; terms: string }[];
  const stored = db.$client.prepare("select risk, reasons from slab_risks where slab_id = ? and model_id = ?");
  for (const m of rows) {
    const target = targetName(db, m.kind, m.code) ?? m.code;
    const missing: number[] = [];
    for (const id of slabRowIds) {
      const r = stored.get(id, m.id) as { risk: number; reasons: string } | undefined;
      if (!r) {
        missing.push(id);
        continue;
      }
      out.get(id)!.push({
        target,
        modelId: m.id,
        modelVersion: m.version,
        risk: r.risk,
        band: bandOf(r.risk, m.high, m.raised),
        reasons: readReasons(db, m.id, r.reasons),
        stored: true,
      });
    }
    if (missing.length) {
      const terms = JSON.parse(m.terms) as ModelTerms;
      for (const s of scoreWith(db, { id: m.id, terms }, missing))
        out.get(s.slabId)!.push({
          target,
          modelId: m.id,
          modelVersion: m.version,
          risk: s.risk,
          band: bandOf(s.risk, m.high, m.raised),
          reasons: expandReasons(terms, s.reasons),
          stored: false,
        });
    }
  }
  for (const list of out.values()) list.sort((a, b) => RISK_RANK[b.band] - RISK_RANK[a.band] || b.risk - a.risk);
  return out;
}
