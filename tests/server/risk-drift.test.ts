import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import type { Db } from "../../server/db/client";
import { createLogger } from "../../server/lib/logger";
import { createNotifications } from "../../server/mail/notifications";
import { createResolver } from "../../server/services/conditions.service";
import { calibrationInTheLarge, checkRiskDrift, riskModelDrift } from "../../server/services/risk/drift.service";
import { createRandom } from "../../server/seed/random";
import { DRIFT_CITL_LIMIT, DRIFT_MIN_AFFECTED, DRIFT_MIN_SLABS } from "../../shared/api/risk-drift";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { plantWriter } from "../helpers/confounded-plant";

/**
 * Drift of the risk models (issue 15): calibration-in-the-large against hand computations, then a
 * plant built here from known models, trained and switched on through the real app, whose slag
 * spots (SLG) rise after the training window while its longitudinal facial cracks (LFC) keep their
 * model: the shifted months of the SLG model are flagged and e-mailed once through the outbox, the
 * LFC model's months stay within the limits, a thin month is "too few to judge", and the route
 * answers with the method, the thresholds and the months.
 */

const logit = (p: number) => Math.log(p / (1 - p));
const expit = (e: number) => 1 / (1 + Math.exp(-e));

describe("calibration-in-the-large (the intercept with logit(risk) as offset)", () => {
  it("when every prediction is the same p, then it is logit(observed) − logit(p) exactly, with SE 1/√(n·ȳ(1−ȳ))", () => {
    // Hand computation: with a common offset the score equation Σ(y − expit(a + logit p)) = 0 gives
    // expit(a + logit p) = ȳ, so a = logit(ȳ) − logit(p) = ln((0.24 · 0.9) / (0.76 · 0.1)) = ln 2.842105… = 1.044545…
    const lp = new Float64Array(50).fill(logit(0.1));
    const y = Uint8Array.from({ length: 50 }, (_, i) => (i < 12 ? 1 : 0));
    const r = calibrationInTheLarge(lp, y);
    expect(r.citl).toBeCloseTo(logit(0.24) - logit(0.1), 12);
    expect(r.citl).toBeCloseTo(1.044545, 6);
    expect(r.se).toBeCloseTo(1 / Math.sqrt(50 * 0.24 * 0.76), 12);
    expect(r.lower).toBeCloseTo(r.citl! - 1.959964 * r.se!, 5);
    expect(r.upper).toBeCloseTo(r.citl! + 1.959964 * r.se!, 5);
    expect(r.reason).toBeNull();
    // Predictions right on average: 0.
    expect(calibrationInTheLarge(new Float64Array(10).fill(logit(0.3)), Uint8Array.from([1, 1, 1, 0, 0, 0, 0, 0, 0, 0])).citl).toBeCloseTo(0, 12);
  });

  it("when the predictions differ, then it matches a root of the score equation found independently by bisection", () => {
    const risk = [0.05, 0.1, 0.2, 0.3, 0.5, 0.7, 0.15, 0.4];
    const y = [0, 0, 1, 0, 1, 1, 0, 1];
    const lp = risk.map(logit);
    const score = (a: number) => y.reduce((s, v, i) => s + v - expit(a + lp[i]!), 0);
    let lo = -10;
    let hi = 10;
    for (let i = 0; i < 200; i++) {
      const mid = (lo + hi) / 2;
      if (score(mid) > 0) lo = mid;
      else hi = mid;
    }
    const root = (lo + hi) / 2;
    const r = calibrationInTheLarge(lp, y);
    expect(r.citl).toBeCloseTo(root, 10);
    // 4 of 8 observed against a mean prediction of 0.2875: more defects than predicted.
    expect(r.citl!).toBeGreaterThan(0.5);
    const info = lp.reduce((s, v) => s + expit(root + v) * (1 - expit(root + v)), 0);
    expect(r.se).toBeCloseTo(1 / Math.sqrt(info), 10);
  });

  it("when a month has no slab with, or none without, the defect, then it is null with the reason", () => {
    const none = calibrationInTheLarge([logit(0.1), logit(0.2)], [0, 0]);
    expect(none).toMatchObject({ citl: null, lower: null, upper: null });
    expect(none.reason).toMatch(/no slab carried the defect/);
    const all = calibrationInTheLarge([logit(0.1), logit(0.2)], [1, 1]);
    expect(all.citl).toBeNull();
    expect(all.reason).toMatch(/every slab carried the defect/);
  });
});

// ---------------------------------------------------------------------------------------------
// The plant: months counted from 14 UTC months before the current one. Months 0–7 are trained on;
// months 8–11 come after the training (600 slabs each); month 12 has 40 slabs; nothing after.
// SLG: −3.0 + 1.4·[LC] + 0.9·(mold − 3) − 0.04·(superheat − 25) up to month 9. Month 10: the
//      intercept raised by 1.0 (the plant changed something the model does not know: odds × 2.7).
//      Month 11: the conditions lose their hold — every slab 14.5 %, about the rate before — so the
//      rate stays but the ranking goes (AUC near 0.5). Month 12: raised by 1.0 again, but only 40 slabs.
// LFC: −2.6 + 1.1·(mold − 3) + 0.05·(superheat − 25) − 0.6·[LC], unchanged throughout.
// ---------------------------------------------------------------------------------------------
const SHIFT_FROM = 10;
const SHIFT = 1.0;
const MONTHS = 13;
const HEATS_PER_MONTH = 150;
const SLABS_PER_HEAT = 4;
const now = new Date();
const monthStart = (k: number) => Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - 14 + k, 1);
const monthKey = (k: number) => new Date(monthStart(k)).toISOString().slice(0, 7);

function buildDriftPlant(db: Db) {
  const r = createRandom(20270315);
  const { c, caster, strands, gradeLC, gradePER, slg, lfc, inspector, heatIns, slabIns, defIns } = plantWriter(db);
  let h = 0;
  c.transaction(() => {
    for (let k = 0; k < MONTHS; k++) {
      const heats = k === 12 ? 10 : HEATS_PER_MONTH;
      const span = monthStart(k + 1) - monthStart(k) - 86_400_000;
      for (let j = 0; j < heats; j++, h++) {
        const lc = h % 2 === 0;
        const castStart = monthStart(k) + Math.floor((j * span) / heats);
        const speed = Math.round((lc ? r.normal(1.7, 0.1) : r.normal(1.3, 0.1)) * 100) / 100;
        const superheat = Math.round(r.normal(25, 6) * 10) / 10;
        const embr = Math.round(r.uniform(0, 600));
        const mold = Math.round(Math.max(0.5, r.normal(3, 1)) * 100) / 100;
        const heatId = Number(
          heatIns.run(
            `DR${String(h).padStart(5, "0")}`,
            caster,
            lc ? gradeLC : gradePER,
            castStart,
            castStart + 3_600_000,
            speed,
            1520 + superheat,
            superheat,
            embr,
            mold,
            lc ? 0.04 : 0.12,
          ).lastInsertRowid,
        );
        const etaSlg = k === 11 ? logit(0.145) : -3.0 + (lc ? 1.4 : 0) + 0.9 * (mold - 3) - 0.04 * (superheat - 25) + (k >= SHIFT_FROM ? SHIFT : 0);
        const etaLfc = -2.6 + 1.1 * (mold - 3) + 0.05 * (superheat - 25) - (lc ? 0.6 : 0);
        for (let s = 0; s < SLABS_PER_HEAT; s++) {
          const slabId = Number(
            slabIns.run(`DR${String(h).padStart(5, "0")}-${s + 1}`, heatId, strands[s % 2]!, Math.floor(s / 2) + 1, castStart + s * 7 * 60_000).lastInsertRowid,
          );
          if (r.chance(expit(etaSlg))) defIns.run(slabId, slg, castStart + 86_400_000, inspector);
          if (r.chance(expit(etaLfc))) defIns.run(slabId, lfc, castStart + 86_400_000, inspector);
        }
      }
    }
    // A second quality engineer (also a process engineer) and a banned one: the mail goes to the active ones.
    const addUser = c.prepare("insert into user (id, name, email, email_verified, role, banned, created_at, updated_at) values (?, ?, ?, 1, ?, ?, 0, 0)");
    addUser.run("drift-q2", "Second quality engineer", "quality2@drift.test", "process,quality", 0);
    addUser.run("drift-q3", "Banned quality engineer", "banned@drift.test", "quality", 1);
  })();
  createResolver(db).resolveAll();
}

let t: TestApp;
let quality: request.Agent;
let inspector: request.Agent;
const models: Record<"SLG" | "LFC", number> = { SLG: 0, LFC: 0 };
const CONDITIONS = ["casting_speed_m_min", "superheat_c", "embr_current_a", "mold_level_sd_mm"];
// Trained on months 0–7 only (the window ends on the last day of month 7).
const TRAIN_TO = new Date(monthStart(8) - 86_400_000).toISOString().slice(0, 10);

beforeAll(async () => {
  t = await createTestApp({ production: false, fakeSmtp: true, beforeStart: buildDriftPlant });
  quality = await t.agentFor("quality");
  inspector = await t.agentFor("inspector");
  const origin = t.env.BETTER_AUTH_URL;
  for (const code of ["SLG", "LFC"] as const) {
    const res = await quality
      .post("/api/risk-models")
      .set("Origin", origin)
      .send({ targetKind: "type", targetCode: code, conditions: CONDITIONS, categories: ["grade_family"], knots: 4, to: TRAIN_TO });
    if (res.status !== 201 || !res.body.beatsBaseline) throw new Error(`training ${code}: ${res.status} ${JSON.stringify(res.body).slice(0, 400)}`);
    models[code] = res.body.id;
    const on = await quality.post(`/api/risk-models/${res.body.id}/activate`).set("Origin", origin);
    if (on.status !== 200) throw new Error(`activating ${code}: ${on.status}`);
  }
}, 240_000);
afterAll(() => t?.close());

const rows = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).all(...a) as Record<string, any>[];
const notify = () => createNotifications({ db: t.db, mailer: t.mailer, baseUrl: t.env.BETTER_AUTH_URL, logger: createLogger("silent") });

describe("drift of the active models, month by month", () => {
  it("when the check runs, then every month after the training is stored; the SLG months after the shift are drifted, those before and every LFC month are not, and the thin month is too few to judge", async () => {
    // The second quality engineer reads German: the e-mail below reaches them in German.
    t.db.$client.prepare("update user set language = 'de' where email = 'quality2@drift.test'").run();
    const summary = await checkRiskDrift(t.db, { notify: notify(), now: Date.now() });
    expect(summary.map((s) => s.modelId).sort()).toEqual([models.SLG, models.LFC].sort());
    const slg = rows("select * from risk_drift_checks where model_id = ? order by month", models.SLG);
    const lfc = rows("select * from risk_drift_checks where model_id = ? order by month", models.LFC);
    // Months 8–12: nothing from the training window (months 0–7) is checked.
    expect(slg.map((r) => r.month)).toEqual([8, 9, 10, 11, 12].map(monthKey));
    expect(lfc.map((r) => r.month)).toEqual([8, 9, 10, 11, 12].map(monthKey));
    expect(slg.slice(0, 4).map((r) => r.slabs)).toEqual([600, 600, 600, 600]);
    expect(slg[4]!.slabs).toBe(40);

    // Before the shift: within the limits. After it: drifted, with more defects than predicted.
    for (const r of slg.slice(0, 2)) {
      expect(r.drifted).toBe(0);
      expect(r.reason).toBe("within the limits");
      expect(Math.abs(r.citl)).toBeLessThan(DRIFT_CITL_LIMIT);
    }
    // Month 10: the intercept rose by 1.0: CITL near 1 (odds × 2.7), the ranking unchanged.
    const shifted = slg[2]!;
    expect(shifted.drifted, shifted.reason).toBe(1);
    expect(shifted.citl).toBeGreaterThan(0.7);
    expect(shifted.citl).toBeLessThan(1.3);
    expect(shifted.observed).toBeGreaterThan(1.5 * shifted.predicted);
    expect(shifted.reason).toMatch(
      /^more slabs with the defect than predicted: the observed odds are \d\.\d\d times the predicted ones \(calibration-in-the-large \d\.\d{3}, 95 % interval \d\.\d{3} to \d\.\d{3}; limit ±0\.405\)$/,
    );
    expect(shifted.auc).toBeGreaterThan(0.7);
    // Month 11: about the same rate, no ranking: drifted by the AUC rule alone.
    const lost = slg[3]!;
    expect(lost.drifted, lost.reason).toBe(1);
    expect(Math.abs(lost.citl)).toBeLessThan(DRIFT_CITL_LIMIT);
    expect(lost.auc).toBeGreaterThan(0.4);
    expect(lost.auc).toBeLessThan(0.6);
    expect(lost.reason).toMatch(
      /^it ranks the slabs worse than at validation: AUC 0\.\d{3} \(95 % interval up to 0\.\d{3}\) lies below the validation interval's lower end 0\.\d{3}$/,
    );
    for (const r of lfc.slice(0, 4)) {
      expect(r.drifted, r.reason).toBe(0);
      expect(Math.abs(r.citl)).toBeLessThan(DRIFT_CITL_LIMIT);
    }
    // 40 slabs: too few, whatever the figures say (the SLG month is shifted too).
    for (const r of [slg[4]!, lfc[4]!]) {
      expect(r.drifted).toBe(0);
      expect(r.reason).toMatch(/^too few slabs to judge: 40 judged slabs, \d+ with the defect \(at least 200 and 10 are needed\)$/);
    }
    expect(summary.find((s) => s.modelId === models.SLG)).toMatchObject({ drifted: [monthKey(10), monthKey(11)], alerted: [monthKey(10), monthKey(11)] });
    expect(summary.find((s) => s.modelId === models.LFC)).toMatchObject({ drifted: [], alerted: [] });
  });

  it("when months drift, then one message to every active quality engineer lands in the outbox (one per language, each reason in the reader's), the months are marked e-mailed in it, and a second check sends nothing more", async () => {
    const mails = rows("select * from email_outbox where kind = 'risk_drift' order by id");
    expect(mails).toHaveLength(2);
    const m = mails.find((x) => x.to_addresses === "quality@demo.test")!;
    const de = mails.find((x) => x.to_addresses === "quality2@drift.test")!;
    expect(m.text_body).toMatch(/Why: more slabs with the defect than predicted: the observed odds are \d\.\d\d times/);
    // The German reader's reasons are German, with the decimal comma; the figures are the same months'.
    expect(de.text_body).toMatch(
      /mehr Brammen mit dem Fehler als vorhergesagt: die beobachteten Chancen sind \d,\d\d-mal die vorhergesagten \(Kalibrierung im Mittel \d,\d{3}/,
    );
    expect(de.text_body).toMatch(/es reiht die Brammen schlechter als bei der Validierung: AUC 0,\d{3}/);
    expect(de.text_body).not.toContain("more slabs with the defect");
    expect(de.text_body).not.toContain("ranks the slabs worse");
    expect(de.text_body).toContain(`${monthKey(10)}:`);
    expect(m.subject).toBe(`Risk model drifting: Mold-flux / slag entrapment (slag spot), version 1 (${monthKey(10)}, ${monthKey(11)})`);
    expect(m.text_body).toContain(`${monthKey(10)}: 600 judged slabs`);
    expect(m.text_body).toMatch(/Predicted \d+\.\d % with the defect, observed \d+\.\d %/);
    expect(m.text_body).toMatch(/AUC 0\.\d\d \(95 % interval/);
    expect(m.text_body).toContain("Train a new version on recent slabs");
    expect(m.text_body).toContain("it never clears a slab");
    expect(m.text_body).not.toContain(monthKey(8) + ":");
    const alerted = rows("select month, alerted_at from risk_drift_checks where model_id = ? and alerted_at is not null order by month", models.SLG);
    expect(alerted.map((r) => r.month)).toEqual([monthKey(10), monthKey(11)]);
    expect(rows("select 1 from risk_drift_checks where model_id = ? and alerted_at is not null", models.LFC)).toHaveLength(0);

    const again = await checkRiskDrift(t.db, { notify: notify(), now: Date.now() });
    expect(again.find((s) => s.modelId === models.SLG)).toMatchObject({ drifted: [monthKey(10), monthKey(11)], alerted: [] });
    expect(rows("select * from email_outbox where kind = 'risk_drift'")).toHaveLength(2);
    expect(rows("select month, alerted_at from risk_drift_checks where model_id = ? and alerted_at is not null order by month", models.SLG)).toEqual(alerted);

    // It travels the real way: nodemailer to the local SMTP server.
    await t.mailer.processDue();
    const sent = rows("select * from email_outbox where id = ?", m.id)[0]!;
    expect(sent.status).toBe("sent");
    const received = rows("select * from mail_received where message_id = ?", sent.message_id)[0]!;
    expect(received.envelope_to).toBe("quality@demo.test");
    expect(rows("select * from email_outbox where id = ?", de.id)[0]!.status).toBe("sent");
  });

  it("when the quality engineer asks for a model's drift, then the answer carries the method, the thresholds and the months with both intervals and when they were e-mailed", async () => {
    const res = await quality.get(`/api/risk-models/${models.SLG}/drift`);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(200);
    const b = res.body;
    expect(b.method).toMatch(/Calibration-in-the-large: the intercept of a logistic regression of the outcome with logit\(predicted risk\) as an offset/);
    expect(b.method).toMatch(/DeLong/);
    expect(b.thresholds).toMatchObject({ minSlabs: DRIFT_MIN_SLABS, minAffected: DRIFT_MIN_AFFECTED, oddsFactor: 1.5, confidence: 0.95 });
    expect(b.thresholds.citlLimit).toBeCloseTo(Math.log(1.5), 12);
    expect(b.thresholds.validationAucCiLower).toBeGreaterThan(0.5);
    expect(b.active).toBe(true);
    expect(Date.parse(b.since)).toBeLessThan(monthStart(8));
    expect(Date.parse(b.since)).toBeGreaterThan(monthStart(7));
    expect(b.months.map((m: { month: string }) => m.month)).toEqual([8, 9, 10, 11, 12].map(monthKey));
    expect(b.slabs).toBe(4 * 600 + 40);
    const stored = rows("select * from risk_drift_checks where model_id = ? order by month", models.SLG);
    b.months.forEach((m: any, i: number) => {
      const s = stored[i]!;
      expect(m).toMatchObject({ month: s.month, slabs: s.slabs, affected: s.affected, drifted: s.drifted === 1, reason: s.reason, provisional: false });
      expect(m.citl).toBeCloseTo(s.citl, 12);
      expect(m.predicted).toBeCloseTo(s.predicted, 12);
      expect(m.auc).toBeCloseTo(s.auc, 12);
      expect(m.citlCiLower).toBeLessThan(m.citl);
      expect(m.citlCiUpper).toBeGreaterThan(m.citl);
      expect(m.aucCiLower).toBeLessThan(m.auc);
      expect(m.checkedAt).not.toBeNull();
    });
    expect(b.months.filter((m: any) => m.alertedAt !== null).map((m: any) => m.month)).toEqual([monthKey(10), monthKey(11)]);
    expect(b.months[4]).toMatchObject({ judged: false, drifted: false });
    expect(b.months[2]).toMatchObject({ judged: true, drifted: true });
    expect(b.months[2].citlCiLower).toBeGreaterThan(DRIFT_CITL_LIMIT - 0.3);
    expect(b.caution).toMatch(/never clears a slab/);
    // Reckoned for a German reader: the method and each month's reason in German, the figures the same.
    const de = (await quality.get(`/api/risk-models/${models.SLG}/drift`).set("Accept-Language", "de")).body;
    expect(de.method).toMatch(/^Monat für Monat \(UTC, nach Gießzeit\)/);
    expect(de.months[2].reason).toMatch(/^(mehr|weniger) Brammen mit dem Fehler als vorhergesagt: die (beobachteten|vorhergesagten) Chancen sind \d+,\d\d-mal/);
    expect(de.months[4].reason).toMatch(/^zu wenige Brammen zum Beurteilen/);
    expect(de.months.map((m: { citl: number | null }) => m.citl)).toEqual(b.months.map((m: { citl: number | null }) => m.citl));

    const lfc = await quality.get(`/api/risk-models/${models.LFC}/drift`);
    expect(lfc.body.months.every((m: any) => !m.drifted)).toBe(true);
  });

  it("when the check runs in the middle of a month, then that month is provisional and holds only the slabs cast at least 14 days before", async () => {
    const DAY = 86_400_000;
    const at = monthStart(12) + 20 * DAY;
    const d = await riskModelDrift(t.db, models.SLG, at);
    const last = d.months[d.months.length - 1]!;
    expect(last.month).toBe(monthKey(12));
    expect(last.provisional).toBe(true);
    expect(last.judged).toBe(false);
    // Month 12's ten heats are spread over the month: only those cast in its first 6 days count.
    const expected = t.db.$client
      .prepare("select count(*) from slabs where slab_id like 'DR%' and cast_at >= ? and cast_at <= ?")
      .pluck()
      .get(monthStart(12), at - 14 * DAY) as number;
    expect(expected).toBeGreaterThan(0);
    expect(expected).toBeLessThan(40);
    expect(last.slabs).toBe(expected);
    expect(d.months.slice(0, -1).every((m) => !m.provisional)).toBe(true);
    // Early in the next month the last one has not had its 14 days yet: still provisional, never final.
    const early = await riskModelDrift(t.db, models.SLG, monthStart(13) + 5 * DAY);
    const open = early.months[early.months.length - 1]!;
    expect(open.month).toBe(monthKey(12));
    expect(open.provisional).toBe(true);
    expect(early.months.slice(0, -1).every((m) => !m.provisional)).toBe(true);
  });

  it("when an inspector asks, or the model does not exist or never finished training, then 403, 404 and 409 in words", async () => {
    expect((await inspector.get(`/api/risk-models/${models.SLG}/drift`)).status).toBe(403);
    const missing = await quality.get("/api/risk-models/99999/drift");
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toMatch(/no risk model 99999/);
    const failed = Number(
      t.db.$client
        .prepare(
          'insert into risk_models (target_kind, target_code, version, spec, status, error) values (\'type\', \'SLG\', 77, \'{"targetKind":"type","targetCode":"SLG","conditions":[],"categories":["grade_family"],"knots":4}\', \'failed\', \'test\')',
        )
        .run().lastInsertRowid,
    );
    const res = await quality.get(`/api/risk-models/${failed}/drift`);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/training failed/);
  });
});
