/**
 * Drift of the risk models (issue 15): as inspections come in, each model's predictions are set
 * against what the yard found, month by month, on the judged slabs it never saw — those cast after
 * the newest slab it was trained or tested on, and at least JUDGED_AFTER_DAYS before the check (a
 * younger slab has not passed the yard yet; choosing among them by what happened to them would tilt
 * the observed share — training-data.ts).
 *
 * Per month (UTC, by cast time): slabs, slabs with the defect, mean predicted risk, observed share,
 * - calibration-in-the-large (CITL): the intercept a of the logistic model logit P(y = 1) = a + lp,
 *   lp = logit(predicted risk) taken as an offset and no other term (Steyerberg, Clinical Prediction
 *   Models; Van Calster et al. 2016, J Clin Epidemiol 74:167, "calibration hierarchy"). Solved exactly
 *   from its score equation Σ (y − expit(a + lp)) = 0 by Newton iterations kept inside a bracket
 *   (the score falls with a); 95 % Wald interval a ± 1.96 / √(Σ μ(1 − μ)) from the observed
 *   information. a > 0: more defects than predicted; e^a is the factor on the odds. Undefined (null,
 *   with the reason) when the month has no slab with, or none without, the defect (a → ±∞).
 * - ROC AUC with DeLong's interval (aucDeLong, server/stats/discrimination.ts).
 *
 * The rule (plain thresholds, shared/api/risk-drift.ts): a month is judged only with ≥ 200 slabs and
 * ≥ 10 of them with the defect; it has drifted when |CITL| > ln 1.5 with its 95 % interval excluding 0
 * (the predicted odds are off by more than half again, and not by chance), or when the upper end of
 * its AUC interval lies below the lower end of the version's validation AUC interval (it ranks the
 * slabs clearly worse than when it was switched on).
 *
 * checkRiskDrift stores each checked month of every active model (risk_drift_checks, upserted; the
 * running month too, marked provisional by the answers) and e-mails the quality engineers through
 * the mail queue once per model and month, in the same transaction that marks the months alerted.
 */
import type { Db } from "../../db/client";
import { HttpError, said } from "../../lib/http-error";
import type { Logger } from "../../lib/logger";
import type { Notifications } from "../../mail/notifications";
import { aucDeLong } from "../../stats/discrimination";
import { normalQuantileOf } from "../../stats/distributions";
import { RISK_CAUTION } from "@shared/api/risk";
import {
  DRIFT_CITL_LIMIT,
  DRIFT_CONFIDENCE,
  DRIFT_MIN_AFFECTED,
  DRIFT_MIN_SLABS,
  DRIFT_ODDS_FACTOR,
  type RiskDrift,
  type RiskDriftMonth,
} from "@shared/api/risk-drift";
import { columnsOf, type ModelTerms } from "./model";
import { JUDGED_AFTER_DAYS, readTrainingData, type RiskSpec } from "./training-data";
import { dec, num, say, speakingIn } from "../../lib/words";
import { LANGUAGES, type Language } from "@shared/i18n/languages";

const DAY = 86_400_000;

const expit = (e: number) => (e >= 0 ? 1 / (1 + Math.exp(-e)) : Math.exp(e) / (1 + Math.exp(e)));
const iso = (ms: number | null | undefined) => (ms === null || ms === undefined ? null : new Date(ms).toISOString());
const monthOf = (ms: number) => new Date(ms).toISOString().slice(0, 7);
const f3 = (v: number) => (Math.abs(v) < 0.0005 ? dec(0, 3) : dec(v, 3));

export interface CitlResult {
  citl: number | null;
  se: number | null;
  lower: number | null;
  upper: number | null;
  reason: string | null;
}

/**
 * Calibration-in-the-large: the intercept of a logistic model with lp (the logit of the predicted
 * risk) as an offset, solved from its score equation by bracketed Newton iterations to 1e−12, with
 * its Wald interval from the observed information.
 */
export function calibrationInTheLarge(lp: ArrayLike<number>, outcome: ArrayLike<number>, confidence = DRIFT_CONFIDENCE): CitlResult {
  const n = lp.length;
  let events = 0;
  for (let i = 0; i < n; i++) events += outcome[i] ? 1 : 0;
  if (n === 0) return { citl: null, se: null, lower: null, upper: null, reason: say("drift.citl.noSlabs") };
  if (events === 0) return { citl: null, se: null, lower: null, upper: null, reason: say("drift.citl.noneAffected") };
  if (events === n) return { citl: null, se: null, lower: null, upper: null, reason: say("drift.citl.allAffected") };
  // score(a) = Σ y − Σ expit(a + lp) falls strictly with a; info(a) = Σ μ(1 − μ) is its negative slope.
  const at = (a: number) => {
    let s = events;
    let h = 0;
    for (let i = 0; i < n; i++) {
      const mu = expit(a + lp[i]!);
      s -= mu;
      h += mu * (1 - mu);
    }
    return { s, h };
  };
  // A bracket [lo, hi] with score(lo) > 0 > score(hi), widened from 0 by doubling.
  let lo = -1;
  let hi = 1;
  while (at(lo).s <= 0 && lo > -1e3) lo *= 2;
  while (at(hi).s >= 0 && hi < 1e3) hi *= 2;
  let a = 0;
  let converged = false;
  for (let it = 0; it < 200; it++) {
    const { s, h } = at(a);
    if (s === 0) {
      converged = true;
      break;
    }
    if (s > 0) lo = a;
    else hi = a;
    let next = h > 0 ? a + s / h : NaN;
    // A Newton step that leaves the bracket is replaced by bisection.
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    const step = next - a;
    a = next;
    if (Math.abs(step) < 1e-12 * (1 + Math.abs(a)) || hi - lo < 1e-14) {
      converged = true;
      break;
    }
  }
  if (!converged || !Number.isFinite(a)) return { citl: null, se: null, lower: null, upper: null, reason: say("drift.citl.notConverged") };
  const { h } = at(a);
  const se = 1 / Math.sqrt(h);
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  return { citl: a, se, lower: a - z * se, upper: a + z * se, reason: null };
}

interface ModelRow {
  id: number;
  target_kind: "type" | "category";
  target_code: string;
  version: number;
  spec: string;
  status: string;
  terms: string | null;
  validation: string | null;
  active: number;
  train_to: number | null;
  created_at: number;
  finished_at: number | null;
  activated_at: number | null;
}

/** The moment after which a version has seen no slab: its newest training/test slab, else when it was trained. */
export const driftBoundary = (m: Pick<ModelRow, "train_to" | "finished_at" | "created_at">) => m.train_to ?? m.finished_at ?? m.created_at;

const CHUNK = 32_768;

/** The linear predictor (logit of the risk) of every slab of the data under the stored terms, in chunks. */
export function linearPredictor(terms: ModelTerms, data: ReturnType<typeof readTrainingData>): Float64Array {
  const size = data.known;
  const eta = new Float64Array(size).fill(terms.coefficients[0]!);
  // The model's terms by key (a condition without spread at training was left out of the terms).
  const numeric = terms.numeric.map((v) => data.numeric.find((d) => d.key === v.key)?.values ?? new Float64Array(size).fill(NaN));
  const categorical = terms.categorical.map((c) => data.categorical.find((d) => d.key === c.key)?.codes ?? new Int32Array(size).fill(-1));
  const part = (a: ArrayLike<number>, from: number, to: number): ArrayLike<number> =>
    ArrayBuffer.isView(a) ? (a as unknown as Float64Array).subarray(from, to) : Array.prototype.slice.call(a, from, to);
  for (let from = 0; from < size; from += CHUNK) {
    const to = Math.min(size, from + CHUNK);
    const cols = columnsOf(
      terms,
      numeric.map((v) => part(v, from, to)),
      categorical.map((c) => part(c, from, to)),
      to - from,
    );
    for (let j = 0; j < cols.length; j++) {
      const b = terms.coefficients[j + 1]!;
      if (b === 0) continue;
      const col = cols[j]!;
      for (let i = 0; i < col.length; i++) eta[from + i] = eta[from + i]! + b * col[i]!;
    }
  }
  return eta;
}

/** How drift is judged, in the reader's language (methods:drift.method). */
export const driftMethod = () =>
  say("drift.method", {
    minSlabs: DRIFT_MIN_SLABS,
    minAffected: DRIFT_MIN_AFFECTED,
    factor: num(DRIFT_ODDS_FACTOR),
    limit: dec(DRIFT_CITL_LIMIT, 3),
    days: JUDGED_AFTER_DAYS,
  });

interface MonthCalc extends Omit<RiskDriftMonth, "alertedAt" | "checkedAt"> {}

function rowOf(db: Db, id: number): ModelRow {
  const r = db.$client.prepare("select * from risk_models where id = ?").get(id) as ModelRow | undefined;
  if (!r) throw new HttpError(404, "not_found", said("risk.noModel", { id }));
  return r;
}

function targetName(db: Db, kind: "type" | "category", code: string): string {
  const table = kind === "type" ? "defect_types" : "defect_categories";
  return (db.$client.prepare(`select name from ${table} where upper(code) = upper(?)`).pluck().get(code) as string | undefined) ?? code;
}

/** The first instant of the UTC month after the one holding `ms`. */
const nextMonthStart = (ms: number) => {
  const d = new Date(ms);
  return Date.UTC(d.getUTCFullYear(), d.getUTCMonth() + 1, 1);
};

/**
 * The months of a trained version, reckoned now (nothing stored): read and scored a month at a time,
 * the event loop given back between months (a year of a large plant is half a million slabs).
 */
async function reckon(
  db: Db,
  m: ModelRow,
  now: number,
): Promise<{ months: MonthCalc[]; slabs: number; since: number; validationAucCiLower: number | null; reasonOf: Map<string, () => string> }> {
  if (m.status !== "ready" || !m.terms)
    throw new HttpError(409, "model_not_ready", said(m.status === "training" ? "risk.driftStillTraining" : "risk.driftTrainingFailed"));
  const terms = JSON.parse(m.terms) as ModelTerms;
  const validation = m.validation ? (JSON.parse(m.validation) as { aucCiLower: number | null }) : null;
  const validationAucCiLower = validation?.aucCiLower ?? null;
  const since = driftBoundary(m);
  const spec = JSON.parse(m.spec) as RiskSpec;
  // Only slabs past the yard by age (the same rule as training's). The month holding the last such
  // slab is still filling: provisional (stored, never e-mailed).
  const judgedTo = now - JUDGED_AFTER_DAYS * DAY;
  const current = monthOf(judgedTo);
  const months: MonthCalc[] = [];
  // Each month's reason as said in the current language, to say it again in another (an e-mail's recipient).
  const reasonOf = new Map<string, () => string>();
  let total = 0;
  for (let from = since + 1; from <= judgedTo; from = nextMonthStart(from)) {
    const data = readTrainingData(db.$client, { ...spec, from, to: Math.min(judgedTo, nextMonthStart(from) - 1) }, now);
    total += data.known;
    months.push(...monthsOf(data, linearPredictor(terms, data)));
    await new Promise((resolve) => setImmediate(resolve));
  }
  return { months, slabs: total, since, validationAucCiLower, reasonOf };

  function monthsOf(data: ReturnType<typeof readTrainingData>, eta: Float64Array): MonthCalc[] {
    const months: MonthCalc[] = [];
    for (let start = 0; start < data.known;) {
      const month = monthOf(data.castAt[start]!);
      let end = start + 1;
      while (end < data.known && monthOf(data.castAt[end]!) === month) end++;
      const lp = eta.subarray(start, end);
      const outcome = data.outcome.subarray(start, end);
      const risk = Float64Array.from(lp, expit);
      const slabs = end - start;
      let affected = 0;
      let sumRisk = 0;
      for (let i = 0; i < slabs; i++) {
        affected += outcome[i]!;
        sumRisk += risk[i]!;
      }
      const citl = calibrationInTheLarge(lp, outcome);
      const auc = aucDeLong({ risk, outcome });
      const judged = slabs >= DRIFT_MIN_SLABS && affected >= DRIFT_MIN_AFFECTED;
      const offCalibration = judged && citl.citl !== null && Math.abs(citl.citl) > DRIFT_CITL_LIMIT && (citl.lower! > 0 || citl.upper! < 0);
      const ranksWorse = judged && auc.upper !== null && validationAucCiLower !== null && auc.upper < validationAucCiLower;
      // The month's reason in the current language (said again for an e-mail in another one).
      const reasonNow = (): string => {
        if (!judged) return say("drift.tooFew", { slabs, affected, minSlabs: DRIFT_MIN_SLABS, minAffected: DRIFT_MIN_AFFECTED });
        const why: string[] = [];
        if (offCalibration)
          why.push(
            say(citl.citl! > 0 ? "drift.more" : "drift.fewer", {
              times: dec(Math.exp(Math.abs(citl.citl!)), 2),
              citl: f3(citl.citl!),
              lower: f3(citl.lower!),
              upper: f3(citl.upper!),
              limit: dec(DRIFT_CITL_LIMIT, 3),
            }),
          );
        if (ranksWorse) why.push(say("drift.ranksWorse", { auc: f3(auc.auc!), upper: f3(auc.upper!), validation: f3(validationAucCiLower!) }));
        return why.length ? why.join("; ") : citl.citl === null ? say("drift.withinUndefined", { why: String(citl.reason) }) : say("drift.within");
      };
      reasonOf.set(month, reasonNow);
      months.push({
        month,
        slabs,
        affected,
        predicted: sumRisk / slabs,
        observed: affected / slabs,
        citl: citl.citl,
        citlCiLower: citl.lower,
        citlCiUpper: citl.upper,
        citlReason: citl.reason,
        auc: auc.auc,
        aucCiLower: auc.lower,
        aucCiUpper: auc.upper,
        aucReason: auc.reason ?? null,
        judged,
        drifted: offCalibration || ranksWorse,
        provisional: month >= current,
        reason: reasonNow(),
      });
      start = end;
    }
    return months;
  }
}

/** GET /api/risk-models/:id/drift: the months reckoned now, with when each was checked and e-mailed. */
export async function riskModelDrift(db: Db, id: number, now = Date.now()): Promise<RiskDrift> {
  const m = rowOf(db, id);
  const r = await reckon(db, m, now);
  const stored = new Map(
    (
      db.$client.prepare("select month, checked_at, alerted_at from risk_drift_checks where model_id = ?").all(id) as {
        month: string;
        checked_at: number;
        alerted_at: number | null;
      }[]
    ).map((s) => [s.month, s]),
  );
  return {
    modelId: m.id,
    target: targetName(db, m.target_kind, m.target_code),
    version: m.version,
    active: m.active === 1,
    since: iso(r.since)!,
    method: driftMethod(),
    thresholds: {
      minSlabs: DRIFT_MIN_SLABS,
      minAffected: DRIFT_MIN_AFFECTED,
      oddsFactor: DRIFT_ODDS_FACTOR,
      citlLimit: DRIFT_CITL_LIMIT,
      confidence: DRIFT_CONFIDENCE,
      validationAucCiLower: r.validationAucCiLower,
    },
    months: r.months.map((x) => ({ ...x, checkedAt: iso(stored.get(x.month)?.checked_at), alertedAt: iso(stored.get(x.month)?.alerted_at) })),
    slabs: r.slabs,
    caution: RISK_CAUTION,
  };
}

export interface DriftAlert {
  modelId: number;
  target: string;
  version: number;
  /** Each month with its reason in English (`reason`) and in every other language (`reasons`), for each recipient's own. */
  months: (RiskDriftMonth & { reasons?: Partial<Record<Language, string>> })[];
}

export interface CheckRiskDriftOptions {
  /** The mail path (notifications queue into the outbox). Without it nothing is e-mailed and nothing marked alerted. */
  notify?: Pick<Notifications, "riskDrift">;
  logger?: Logger;
  now?: number;
}

/**
 * Checks every active model: stores each month (upsert), then e-mails the quality engineers about
 * the judged, drifted months not e-mailed before — one message per model, queued in the transaction
 * that marks those months alerted, so a month is e-mailed once.
 */
export async function checkRiskDrift(db: Db, opts: CheckRiskDriftOptions = {}) {
  const now = opts.now ?? Date.now();
  const c = db.$client;
  const models = c.prepare("select * from risk_models where active = 1 and status = 'ready' order by id").all() as ModelRow[];
  const upsert = c.prepare(
    `insert into risk_drift_checks (model_id, month, slabs, affected, predicted, observed, citl, auc, drifted, reason, checked_at)
     values (@modelId, @month, @slabs, @affected, @predicted, @observed, @citl, @auc, @drifted, @reason, @checkedAt)
     on conflict (model_id, month) do update set slabs = excluded.slabs, affected = excluded.affected, predicted = excluded.predicted, observed = excluded.observed,
       citl = excluded.citl, auc = excluded.auc, drifted = excluded.drifted, reason = excluded.reason, checked_at = excluded.checked_at`,
  );
  const summary: { modelId: number; months: number; drifted: string[]; alerted: string[] }[] = [];
  for (const m of models) {
    try {
      const r = await reckon(db, m, now);
      c.transaction(() => {
        for (const x of r.months) {
          upsert.run({
            modelId: m.id,
            month: x.month,
            slabs: x.slabs,
            affected: x.affected,
            predicted: x.predicted,
            observed: x.observed,
            citl: x.citl,
            auc: x.auc,
            drifted: x.drifted ? 1 : 0,
            reason: x.reason,
            checkedAt: now,
          });
        }
      })();
      // A month still filling (its last slabs not yet 14 days old) is shown, never e-mailed: a half month's alarm could not be taken back.
      const drifted = r.months.filter((x) => x.judged && x.drifted && !x.provisional);
      const alerted: string[] = [];
      // A month's reason in each other language, for each recipient's own (said again, not reckoned again).
      const reasonsOf = (month: string): Partial<Record<Language, string>> =>
        Object.fromEntries(LANGUAGES.filter((l) => l !== "en").map((l) => [l, speakingIn(l, r.reasonOf.get(month)!)]));
      if (drifted.length && opts.notify) {
        const notify = opts.notify;
        c.transaction(() => {
          const done = new Set(c.prepare("select month from risk_drift_checks where model_id = ? and alerted_at is not null").pluck().all(m.id) as string[]);
          const fresh = drifted.filter((x) => !done.has(x.month));
          if (!fresh.length) return;
          const alert: DriftAlert = {
            modelId: m.id,
            target: targetName(db, m.target_kind, m.target_code),
            version: m.version,
            months: fresh.map((x) => ({ ...x, reasons: reasonsOf(x.month), checkedAt: iso(now), alertedAt: iso(now) })),
          };
          // Marked alerted only when the message is in the queue (no quality engineer: tried again at the next check).
          if (notify.riskDrift(alert, r.validationAucCiLower) === null) return;
          const mark = c.prepare("update risk_drift_checks set alerted_at = ? where model_id = ? and month = ? and alerted_at is null");
          for (const x of fresh) mark.run(now, m.id, x.month);
          alerted.push(...fresh.map((x) => x.month));
        })();
      }
      summary.push({ modelId: m.id, months: r.months.length, drifted: drifted.map((x) => x.month), alerted });
      if (alerted.length) opts.logger?.info({ modelId: m.id, months: alerted }, "risk model drift e-mailed to the quality engineers");
    } catch (err) {
      opts.logger?.error({ err, modelId: m.id }, "risk drift check failed for a model");
    }
  }
  return summary;
}

export const DRIFT_CHECK_EVERY_MS = 24 * 60 * 60_000;

/**
 * Runs the check now (on the next turn, so the start is not held up) and once a day after; the
 * timer does not keep the process alive. Returns a stop function for the shutdown.
 */
export function scheduleRiskDrift(db: Db, opts: Omit<CheckRiskDriftOptions, "now"> & { firstAfter?: Promise<unknown> }) {
  const run = () => void checkRiskDrift(db, opts).catch((err: unknown) => opts.logger?.error({ err }, "risk drift check failed"));
  let stopped = false;
  // A start that never gets ready (the report facts failed to load) still gets its check.
  void (opts.firstAfter ?? Promise.resolve())
    .catch(() => undefined)
    .then(() => {
      if (!stopped) setImmediate(() => !stopped && run());
    });
  const timer = setInterval(run, DRIFT_CHECK_EVERY_MS);
  timer.unref();
  return () => {
    stopped = true;
    clearInterval(timer);
  };
}
