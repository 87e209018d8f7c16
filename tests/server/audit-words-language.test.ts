import ExcelJS from "exceljs";
import fs from "node:fs";
import path from "node:path";
import type request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { binaryBody as binary } from "../helpers/workbooks";

/**
 * A heat's audit trail said in the reader's language: the trace screen's JSON in the requester's
 * (their choice, else their browser's), the history workbook in the asker's, a workbook sent by mail
 * in its recipients'; English word for word as before.
 */
let t: TestApp;
let claims: request.Agent;
let process_: request.Agent;
let heatNo: string;
let slabId: string;
let defect: { type: string; slab: string };
let reviewed: { type: string; slab: string; from: number; to: number };
const CLAIM = "CL-2026-0777";

const O = () => t.env.BETTER_AUTH_URL;
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const speaks = async (agent: request.Agent, language: "de" | null) =>
  expect((await agent.put("/api/me/language").set("Origin", O()).send({ language })).status).toBe(200);
const whats = (history: { audit: { what: string }[] }) => history.audit.map((a) => a.what);

/** The "What" column of a history workbook's audit sheet. */
async function auditSheet(buffer: Buffer, sheet: string, header: string): Promise<string[]> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buffer as never);
  const ws = wb.getWorksheet(sheet);
  expect(ws, sheet).toBeDefined();
  const col = (ws!.getRow(1).values as unknown[]).indexOf(header);
  expect(col, header).toBeGreaterThan(0);
  const out: string[] = [];
  ws!.eachRow((row, n) => {
    if (n > 1) out.push(String(row.getCell(col).value));
  });
  return out;
}

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  claims = await t.agentFor("claims");
  process_ = await t.agentFor("process");
  // A heat's first live defect: tagged with a cause; a claim on one of its slabs, linked, under review.
  const d = one(
    `select d.id, t.code, s.slab_id, h.heat_no from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join defect_types t on t.id = d.type_id
     where d.deleted_at is null and d.review_status <> 'rejected' and h.id = (
       select s2.heat_id from defects d2 join slabs s2 on s2.id = d2.slab_id where d2.deleted_at is null and d2.review_status <> 'rejected'
       group by s2.heat_id having count(*) >= 2 and sum(d2.review_status = 'new') >= 1 order by s2.heat_id limit 1)
     order by d.review_status = 'new', d.found_at, d.id limit 1`,
  );
  heatNo = d.heat_no;
  slabId = d.slab_id;
  defect = { type: d.code, slab: d.slab_id };
  const tagged = await process_
    .post(`/api/defects/${d.id}/causes`)
    .set("Origin", O())
    .send({ tags: ["sen-clogging"], confidence: "probable" });
  expect(tagged.status).toBe(201);
  // Another of its defects corrected on review: a new severity.
  const r = one(
    `select d.id, d.severity, t.code, s.slab_id from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join defect_types t on t.id = d.type_id
     where h.heat_no = ? and d.deleted_at is null and d.review_status = 'new' and d.id <> ? order by d.found_at, d.id limit 1`,
    heatNo,
    d.id,
  );
  reviewed = { type: r.code, slab: r.slab_id, from: r.severity, to: (r.severity % 4) + 1 };
  const review = await (
    await t.agentFor("quality")
  )
    .post(`/api/defects/${r.id}/review`)
    .set("Origin", O())
    .send({ decision: "correct", severity: reviewed.to });
  expect(review.status).toBe(200);
  const claim = await claims
    .post("/api/claims")
    .set("Origin", O())
    .send({ claimNo: CLAIM, customer: "Invented Tube Mill (demo)", receivedOn: "2026-11-30", defectComplained: "Slivers" });
  expect(claim.status).toBe(201);
  const linked = await claims
    .post(`/api/claims/${claim.body.id}/slabs`)
    .set("Origin", O())
    .send({ slabIds: [slabId] });
  expect(linked.status).toBe(200);
  const underReview = await claims.patch(`/api/claims/${claim.body.id}`).set("Origin", O()).send({ status: "under_review" });
  expect(underReview.status).toBe(200);
}, 120_000);
afterAll(() => t?.close());

const english = () => [
  `Tagged ${defect.type} on slab ${defect.slab} with the cause SEN clogging (probable)`,
  `Reviewed ${reviewed.type} on slab ${reviewed.slab}: corrected: severity ${reviewed.from} → ${reviewed.to} and note`,
  `Claim ${CLAIM} recorded`,
  `Claim ${CLAIM}: 1 slab linked`,
  `Claim ${CLAIM}: status → under review`,
];
const german = () => [
  `${defect.type} an Bramme ${defect.slab} der Ursache SEN clogging zugeordnet (wahrscheinlich)`,
  `${reviewed.type} an Bramme ${reviewed.slab} geprüft und korrigiert: Schwere ${reviewed.from} → ${reviewed.to} und Bemerkung`,
  `Reklamation ${CLAIM} erfasst`,
  `Reklamation ${CLAIM}: 1 Bramme verknüpft`,
  `Reklamation ${CLAIM}: Bearbeitungsstand → in Prüfung`,
];

describe("the audit trail in the reader's language", () => {
  it("when a German user reads a heat's history or its trace, then the audit trail is German; an English reader reads it word for word as before", async () => {
    await speaks(claims, "de");
    try {
      const res = await claims.get(`/api/heats/${heatNo}/history`).set("Accept-Language", "en-GB");
      expect(res.status).toBe(200);
      expect(whats(res.body)).toEqual(expect.arrayContaining(german()));
      for (const w of whats(res.body)) expect(w).not.toMatch(/^(Logged|Changed|Reviewed|Added|Removed|Tagged|Deleted|Claim|Investigation) /);
      const traced = await claims.get(`/api/trace?q=${encodeURIComponent(slabId)}`);
      expect(traced.status).toBe(200);
      expect(whats(traced.body.history)).toEqual(expect.arrayContaining(german()));
    } finally {
      await speaks(claims, null);
    }
    const en = await claims.get(`/api/heats/${heatNo}/history`);
    expect(whats(en.body)).toEqual(expect.arrayContaining(english()));
    expect(whats(en.body).join("\n")).not.toMatch(/Bramme|Reklamation|zugeordnet/);
  });

  it("when the history holds an investigation, then its steps are said in German to a German reader and in English as before", async () => {
    const inv = one(
      `select i.ref, h.heat_no from investigations i join investigation_subjects x on x.investigation_id = i.id left join defects d on d.id = x.defect_id
       left join slabs s on s.id = d.slab_id join heats h on h.id = coalesce(x.heat_id, s.heat_id) order by i.id limit 1`,
    );
    const [de, en] = await Promise.all([
      claims.get(`/api/heats/${inv.heat_no}/history`).set("Accept-Language", "de"),
      claims.get(`/api/heats/${inv.heat_no}/history`),
    ]);
    expect(whats(de.body)).toContain(`Untersuchung ${inv.ref}: eröffnet`);
    expect(whats(en.body)).toContain(`Investigation ${inv.ref}: opened`);
    expect(whats(de.body).length).toBe(whats(en.body).length);
    for (const w of whats(de.body).filter((x) => x.startsWith("Untersuchung"))) expect(w).toMatch(/^Untersuchung \S+: [a-zäöüßA-ZÄÖÜ]/);
  });

  it("when someone with no language of their own asks with a German browser, then the audit trail is German, the customer edition keeping only what it kept", async () => {
    const res = await claims.get(`/api/heats/${heatNo}/history`).set("Accept-Language", "de-DE,de;q=0.9,en;q=0.5");
    expect(whats(res.body)).toEqual(expect.arrayContaining(german()));
    const claimId = one("select id from claims where claim_no = ?", CLAIM).id as number;
    const url = `/api/heats/${heatNo}/history?edition=customer&claim=${claimId}&sections=defects,causes,audit`;
    const [de, en] = await Promise.all([claims.get(url).set("Accept-Language", "de"), claims.get(url)]);
    expect(de.status).toBe(200);
    // The same records in the same order, each said in its language, no one's name.
    expect(de.body.audit.map((a: { at: string; by: string | null }) => [a.at, a.by])).toEqual(
      en.body.audit.map((a: { at: string; by: string | null }) => [a.at, a.by]),
    );
    expect(whats(de.body)).toEqual(expect.arrayContaining(german()));
    expect(whats(en.body)).toEqual(expect.arrayContaining(english()));
  });

  it("when a German user downloads the history workbook, then its audit sheet says the trail in German; in English as before", async () => {
    await speaks(claims, "de");
    try {
      const res = await claims.get(`/api/heats/${heatNo}/history.xlsx`).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      expect(await auditSheet(res.body as Buffer, "Prüfpfad", "Was")).toEqual(expect.arrayContaining(german()));
    } finally {
      await speaks(claims, null);
    }
    const res = await claims.get(`/api/heats/${heatNo}/history.xlsx`).buffer(true).parse(binary);
    expect(await auditSheet(res.body as Buffer, "Audit trail", "What")).toEqual(expect.arrayContaining(english()));
  });

  it("when an English officer mails the history to a German colleague, then the workbook's audit sheet is German, and the sending is said in each reader's language", async () => {
    const quality = await t.agentFor("quality");
    await speaks(quality, "de");
    try {
      const claimId = one("select id from claims where claim_no = ?", CLAIM).id as number;
      const res = await claims
        .post(`/api/claims/${claimId}/send-history`)
        .set("Origin", O())
        .send({ heatNo, to: ["quality@demo.test"], edition: "internal" });
      expect(res.status).toBe(202);
      const sent = one("select attachments from email_outbox where id = ?", res.body.messageId);
      const [file] = JSON.parse(sent.attachments as string) as { file: string }[];
      const buffer = fs.readFileSync(path.join(path.resolve(t.env.UPLOAD_DIR), "mail", file!.file));
      expect(await auditSheet(buffer, "Prüfpfad", "Was")).toEqual(expect.arrayContaining(german()));

      const sending = `interne Ausgabe der Historie der Schmelze ${heatNo} für quality@demo.test in den Postausgang gestellt`;
      expect(whats((await quality.get(`/api/heats/${heatNo}/history`)).body)).toContain(`Reklamation ${CLAIM}: ${sending}`);
      expect(whats((await claims.get(`/api/heats/${heatNo}/history`)).body)).toContain(
        `Claim ${CLAIM}: internal edition of the heat ${heatNo} history handed to the mail outbox for quality@demo.test`,
      );
    } finally {
      await speaks(quality, null);
    }
  });
});
