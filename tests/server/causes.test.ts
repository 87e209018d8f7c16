import ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import type { CausePareto } from "../../shared/api/causes";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let process_: request.Agent;
let quality: request.Agent;
let admin: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.02 });
  process_ = await t.agentFor("process");
  quality = await t.agentFor("quality");
  admin = await t.agentFor("admin");
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const q = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const n = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a) as number;
/** A live, unrejected defect that carries no cause yet. */
const untaggedDefect = (offset = 0) =>
  n(
    `select d.id from defects d where d.deleted_at is null and d.review_status <> 'rejected'
     and not exists (select 1 from defect_causes dc where dc.defect_id = d.id) order by d.id limit 1 offset ?`,
    offset,
  );

describe("cause taxonomy", () => {
  it("when anyone of the office roles reads it, then the five groups come with their tags and codes", async () => {
    const res = await quality.get("/api/cause-tags");
    expect(res.status).toBe(200);
    expect(res.body.groups.map((g: { code: string }) => g.code)).toEqual(["process", "equipment", "material", "handling", "measurement"]);
    const codes = res.body.groups.flatMap((g: { tags: { code: string }[] }) => g.tags.map((x) => x.code));
    expect(codes).toHaveLength(n("select count(*) from cause_tags where retired_at is null"));
    expect(codes).toContain("sen-clogging");
    const sen = res.body.groups[1].tags.find((x: { code: string }) => x.code === "sen-clogging");
    expect(sen).toMatchObject({
      name: "SEN clogging",
      group: "equipment",
      retired: false,
      uses: n("select count(*) from defect_causes where removed_at is null and tag_id = (select id from cause_tags where code = 'sen-clogging')"),
    });
  });

  it("when a quality engineer tries to add a tag, then 403 and nothing is written", async () => {
    const res = await quality.post("/api/cause-tags").set("Origin", O()).send({ code: "quality-try", name: "Try", group: "process" });
    expect(res.status).toBe(403);
    expect(n("select count(*) from cause_tags where code = 'quality-try'")).toBe(0);
  });

  it("when a tag in use is deleted, then 409 says to retire it; retired, it leaves the list but keeps its taggings; a never-used tag can be deleted", async () => {
    const used = await process_.delete("/api/cause-tags/mold-powder").set("Origin", O());
    expect(used.status).toBe(409);
    expect(used.body.error.message).toContain("retire it instead");
    expect(n("select count(*) from cause_tags where code = 'mold-powder'")).toBe(1);

    const retire = await process_.patch("/api/cause-tags/mold-powder").set("Origin", O()).send({ retired: true });
    expect(retire.status).toBe(200);
    expect(retire.body.retired).toBe(true);
    const list = await process_.get("/api/cause-tags");
    expect(list.body.groups.flatMap((g: { tags: { code: string }[] }) => g.tags.map((x) => x.code))).not.toContain("mold-powder");
    const all = await process_.get("/api/cause-tags?includeRetired=true");
    expect(all.body.groups.flatMap((g: { tags: { code: string }[] }) => g.tags.map((x) => x.code))).toContain("mold-powder");
    // A retired tag cannot be put on a defect.
    const tagRetired = await process_
      .post(`/api/defects/${untaggedDefect()}/causes`)
      .set("Origin", O())
      .send({ tags: ["mold-powder"], confidence: "probable" });
    expect(tagRetired.status).toBe(400);
    expect(tagRetired.body.error.code).toBe("retired_tag");
    await process_.patch("/api/cause-tags/mold-powder").set("Origin", O()).send({ retired: false });

    const created = await admin.post("/api/cause-tags").set("Origin", O()).send({ code: "crane-chain-mark", name: "Crane chain mark", group: "handling" });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({ code: "crane-chain-mark", group: "handling", uses: 0, everUsed: false });
    const dup = await admin.post("/api/cause-tags").set("Origin", O()).send({ code: "crane-chain-mark", name: "Again", group: "handling" });
    expect(dup.status).toBe(409);
    const del = await admin.delete("/api/cause-tags/crane-chain-mark").set("Origin", O());
    expect(del.status).toBe(200);
    expect(n("select count(*) from cause_tags where code = 'crane-chain-mark'")).toBe(0);
    expect(n("select count(*) from audit_log where entity = 'cause_tag' and entity_id = 'crane-chain-mark'")).toBe(2);
    expect(n("select count(*) from audit_log where action = 'cause_tag.retire' and entity_id = 'mold-powder'")).toBe(1);
  });

  it("when the code is not lower-case with hyphens, then 400 names the field", async () => {
    const res = await process_.post("/api/cause-tags").set("Origin", O()).send({ code: "Bad Code", name: "Bad", group: "process" });
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].path).toBe("code");
  });
});

describe("tagging one defect", () => {
  it("when a process engineer tags a defect with two causes, then both are live with confidence, note and author, the defect shows them, and the audit has it", async () => {
    const id = untaggedDefect();
    const res = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging", "ladle-change"], confidence: "probable", note: "Clog found at the tundish change" });
    expect(res.status).toBe(201);
    expect(res.body.current.map((c: { tag: string }) => c.tag).sort()).toEqual(["ladle-change", "sen-clogging"]);
    expect(res.body.current[0]).toMatchObject({
      confidence: "probable",
      note: "Clog found at the tundish change",
      removedAt: null,
      by: { name: "Priya Raman (demo process engineer)" },
    });
    const defect = await quality.get(`/api/defects/${id}`);
    expect(defect.body.causes.map((c: { tag: string }) => c.tag).sort()).toEqual(["ladle-change", "sen-clogging"]);
    const audit = q("select * from audit_log where action = 'defect.causes.tag' and entity_id = ?", String(id));
    expect(JSON.parse(audit.after)).toEqual({ tags: ["sen-clogging", "ladle-change"], confidence: "probable", note: "Clog found at the tundish change" });
  });

  it("when the same tag is given again with a firmer confidence, then the old tagging is closed and a new one written; the same again changes nothing", async () => {
    const id = untaggedDefect();
    await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["high-superheat"], confidence: "suspected" });
    const again = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["high-superheat"], confidence: "suspected" });
    expect(again.body.history).toHaveLength(1);
    const firmer = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["high-superheat"], confidence: "confirmed" });
    expect(firmer.body.current).toHaveLength(1);
    expect(firmer.body.current[0].confidence).toBe("confirmed");
    expect(firmer.body.history).toHaveLength(2);
    expect(firmer.body.history[0].confidence).toBe("suspected");
    expect(firmer.body.history[0].removedAt).not.toBeNull();
    expect(n("select count(*) from defect_causes where defect_id = ?", id)).toBe(2);
  });

  it("when a tagging is removed, then it stays in the history with who removed it, the audit keeps the reason, and removing it twice is a 409", async () => {
    const id = untaggedDefect();
    const tagged = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["argon-flow"], confidence: "suspected" });
    const link = tagged.body.current[0].id;
    const removed = await process_.delete(`/api/defects/${id}/causes/${link}`).set("Origin", O()).send({ reason: "Argon was in range on the log" });
    expect(removed.status).toBe(200);
    expect(removed.body.current).toEqual([]);
    expect(removed.body.history[0]).toMatchObject({ tag: "argon-flow", removedBy: { name: "Priya Raman (demo process engineer)" } });
    const audit = q("select * from audit_log where action = 'defect.causes.remove' and entity_id = ?", String(id));
    expect(JSON.parse(audit.before).tag).toBe("argon-flow");
    expect(JSON.parse(audit.after)).toEqual({ reason: "Argon was in range on the log" });
    const twice = await process_.delete(`/api/defects/${id}/causes/${link}`).set("Origin", O()).send({});
    expect(twice.status).toBe(409);
  });

  it("when a quality engineer tags or removes, then 403 and nothing changes; they can read the history", async () => {
    const id = untaggedDefect();
    const res = await quality
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging"], confidence: "confirmed" });
    expect(res.status).toBe(403);
    expect(n("select count(*) from defect_causes where defect_id = ?", id)).toBe(0);
    const read = await quality.get(`/api/defects/${id}/causes`);
    expect(read.status).toBe(200);
    expect(read.body).toEqual({ defectId: id, current: [], history: [] });
  });

  it("when the tag is unknown or the confidence wrong, then 400 in plain words and nothing is written", async () => {
    const id = untaggedDefect();
    const unknown = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging", "gremlins"], confidence: "probable" });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.message).toBe("Unknown cause tag: gremlins. See GET /api/cause-tags.");
    const conf = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging"], confidence: "certain" });
    expect(conf.status).toBe(400);
    expect(conf.body.error.message).toContain("suspected, probable or confirmed");
    expect(n("select count(*) from defect_causes where defect_id = ?", id)).toBe(0);
  });
});

describe("bulk tagging", () => {
  const heatWithDefects = () =>
    q(
      `select h.heat_no, count(d.id) as n from heats h join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id
       where d.deleted_at is null and d.review_status <> 'rejected' group by h.id having count(d.id) >= 3 order by h.id limit 1`,
    ) as { heat_no: string; n: number };

  it("when a heat's defects are tagged, then the dry run counts them without writing, the real run tags each once, and a repeat changes nothing", async () => {
    const heat = heatWithDefects();
    const before = n("select count(*) from defect_causes");
    const dry = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({
        selection: { kind: "heat", heatNo: heat.heat_no },
        tags: ["tundish-change"],
        confidence: "probable",
        note: "Heat cast after a tundish change",
        dryRun: true,
      });
    expect(dry.status).toBe(200);
    expect(dry.body).toMatchObject({ dryRun: true, defects: heat.n, tagged: heat.n, unchanged: 0 });
    expect(dry.body.sample).toHaveLength(Math.min(heat.n, 20));
    expect(n("select count(*) from defect_causes")).toBe(before);

    const real = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "heat", heatNo: heat.heat_no }, tags: ["tundish-change"], confidence: "probable", note: "Heat cast after a tundish change" });
    expect(real.status).toBe(201);
    expect(real.body).toMatchObject({ dryRun: false, defects: heat.n, tagged: heat.n, unchanged: 0 });
    expect(n("select count(*) from defect_causes")).toBe(before + heat.n);
    const audit = q("select * from audit_log where action = 'defect.causes.bulk_tag' order by id desc limit 1");
    expect(audit.entity_id).toBe(heat.heat_no);
    expect(JSON.parse(audit.after).defects).toHaveLength(heat.n);

    const repeat = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "heat", heatNo: heat.heat_no }, tags: ["tundish-change"], confidence: "probable", note: "Heat cast after a tundish change" });
    expect(repeat.body).toMatchObject({ tagged: 0, unchanged: heat.n });
    expect(n("select count(*) from defect_causes")).toBe(before + heat.n);
  });

  it("when a sequence or a report filter is the selection, then it covers exactly the defects SQL finds for it", async () => {
    const seq = q(
      "select sq.sequence_no from sequences sq join heats h on h.sequence_id = sq.id join slabs s on s.heat_id = h.id join defects d on d.slab_id = s.id group by sq.id order by count(*) desc limit 1",
    ).sequence_no as string;
    const inSeq = n(
      `select count(*) from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join sequences sq on sq.id = h.sequence_id
       where sq.sequence_no = ? and d.deleted_at is null and d.review_status <> 'rejected'`,
      seq,
    );
    const s = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "sequence", sequenceNo: seq }, tags: ["ladle-change"], confidence: "suspected", dryRun: true });
    expect(s.body.defects).toBe(inSeq);

    const inFilter = n(
      `select count(*) from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id
       where t.code = 'SLG' and d.severity >= 2 and d.deleted_at is null and d.review_status <> 'rejected'`,
    );
    const f = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({
        selection: { kind: "filter", filters: { defectType: "SLG", minSeverity: "2" } },
        tags: ["mold-level-disturbance"],
        confidence: "suspected",
        dryRun: true,
      });
    expect(f.status).toBe(200);
    expect(f.body.defects).toBe(inFilter);
    expect(inFilter).toBeGreaterThan(0);
  });

  it("when the heat does not exist, then 404 in plain words; a quality engineer gets 403", async () => {
    const res = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "heat", heatNo: "NOPE999" }, tags: ["ladle-change"], confidence: "suspected" });
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe("There is no heat NOPE999 on record.");
    const q403 = await quality
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "heat", heatNo: heatWithDefects().heat_no }, tags: ["ladle-change"], confidence: "suspected" });
    expect(q403.status).toBe(403);
  });
});

describe("the worklist of defects without a cause", () => {
  const untaggedCount = (extra = "", ...a: unknown[]) =>
    n(
      `select count(*) from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id join defect_types t on t.id = d.type_id
       where d.deleted_at is null and d.review_status <> 'rejected'
       and not exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null)${extra}`,
      ...a,
    );

  it("when filtered by causes=none, then the total is exactly the live, unrejected defects with no live tagging, narrowed by type, heat and least severity", async () => {
    const all = await process_.get("/api/defects?causes=none&pageSize=200");
    expect(all.status).toBe(200);
    expect(all.body.total).toBe(untaggedCount());
    expect(all.body.total).toBeGreaterThan(0);
    expect(all.body.items.every((d: { causes: unknown[]; reviewStatus: string }) => d.causes.length === 0 && d.reviewStatus !== "rejected")).toBe(true);

    const slg = await process_.get("/api/defects?causes=none&type=SLG&minSeverity=2&pageSize=1");
    expect(slg.body.total).toBe(untaggedCount(" and t.code = 'SLG' and d.severity >= 2"));
    expect(slg.body.total).toBeLessThan(all.body.total);

    const heat = q(
      `select h.heat_no from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id where d.deleted_at is null and d.review_status <> 'rejected'
       and not exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null) group by h.id having count(*) >= 2 order by h.id limit 1`,
    ).heat_no as string;
    const byHeat = await process_.get(`/api/defects?causes=none&heat=${heat}&sort=severity`);
    expect(byHeat.body.total).toBe(untaggedCount(" and h.heat_no = ?", heat));
    const sev = byHeat.body.items.map((d: { severity: number }) => d.severity);
    expect(sev).toEqual([...sev].sort((a, b) => b - a));

    const tagged = await process_.get("/api/defects?causes=any&pageSize=1");
    expect(tagged.body.total).toBe(
      n(
        "select count(*) from defects d where d.deleted_at is null and exists (select 1 from defect_causes dc where dc.defect_id = d.id and dc.removed_at is null)",
      ),
    );
  });

  it("when a listed defect is tagged (one, or several through the list's ids), then it leaves the worklist; a removed tagging brings it back", async () => {
    const first = await process_.get("/api/defects?causes=none&sort=oldest&pageSize=3");
    const [a, b, c] = first.body.items as { id: number }[];
    const before = first.body.total as number;
    const one = await process_
      .post(`/api/defects/${a!.id}/causes`)
      .set("Origin", O())
      .send({ tags: ["ladle-change"], confidence: "suspected" });
    expect(one.status).toBe(201);
    const bulk = await process_
      .post("/api/causes/bulk")
      .set("Origin", O())
      .send({ selection: { kind: "defects", ids: [b!.id, c!.id] }, tags: ["sen-clogging"], confidence: "probable" });
    expect(bulk.body).toMatchObject({ defects: 2, tagged: 2 });
    const after = await process_.get("/api/defects?causes=none&sort=oldest&pageSize=3");
    expect(after.body.total).toBe(before - 3);
    expect(after.body.items.map((d: { id: number }) => d.id)).not.toContain(a!.id);

    const link = one.body.current[0].id as number;
    const removed = await process_.delete(`/api/defects/${a!.id}/causes/${link}`).set("Origin", O()).send({ reason: "Wrong ladle" });
    expect(removed.status).toBe(200);
    const back = await process_.get("/api/defects?causes=none&pageSize=1");
    expect(back.body.total).toBe(before - 2);
  });

  it("when the filter values are wrong, then 400 in plain words", async () => {
    const sev = await process_.get("/api/defects?causes=none&minSeverity=7");
    expect(sev.status).toBe(400);
    expect(JSON.stringify(sev.body.error)).toContain("The least severity is 1 to 4.");
    const c = await process_.get("/api/defects?causes=some");
    expect(c.status).toBe(400);
    expect(JSON.stringify(c.body.error)).toContain("causes is none or any.");
  });
});

describe("cause Pareto", () => {
  it("when causes are tagged, then each row counts the distinct live defects per tag, shares add to 1, the cause filter reaches the other reports, and the workbook equals the JSON", async () => {
    const res = await quality.get("/api/reports/cause-pareto?minConfidence=suspected");
    expect(res.status).toBe(200);
    const body = res.body as CausePareto;
    const live = `from defect_causes dc join defects d on d.id = dc.defect_id join cause_tags t on t.id = dc.tag_id
      where dc.removed_at is null and d.deleted_at is null and d.review_status <> 'rejected'`;
    expect(body.defects).toBe(n("select count(*) from defects d where d.deleted_at is null and d.review_status <> 'rejected'"));
    expect(body.tagged).toBe(n(`select count(distinct d.id) ${live}`));
    for (const row of body.rows) expect(row.defects, row.code).toBe(n(`select count(distinct d.id) ${live} and t.code = ?`, row.code));
    expect(body.rows.map((r) => r.defects)).toEqual([...body.rows.map((r) => r.defects)].sort((a, b) => b - a));
    expect(body.rows.reduce((s, r) => s + r.share, 0)).toBeCloseTo(1, 10);
    expect(body.rows.at(-1)!.cumulative).toBeCloseTo(1, 10);

    const confirmed = await quality.get("/api/reports/cause-pareto?minConfidence=confirmed");
    const top = confirmed.body.rows[0];
    // Most defects carry no confirmed cause: the note says so, in the reader's language with its own grouping of thousands.
    const { defects, tagged } = confirmed.body as CausePareto;
    expect(tagged / defects).toBeLessThan(0.5);
    const grouped = (locale: string, x: number) => new Intl.NumberFormat(locale).format(x);
    expect(confirmed.body.notes).toContain(
      `${grouped("en-GB", defects - tagged)} of ${grouped("en-GB", defects)} defects carry no cause at this confidence: the Pareto describes the tagged ones only.`,
    );
    const german = await quality.get("/api/reports/cause-pareto?minConfidence=confirmed").set("Accept-Language", "de");
    expect(german.body.notes).toContain(
      `${grouped("de-DE", defects - tagged)} von ${grouped("de-DE", defects)} Fehlern tragen keine Ursache mit dieser Sicherheit: das Pareto beschreibt nur die mit Ursache.`,
    );
    expect((german.body.notes as string[]).join(" ")).not.toMatch(/defects|tagged/);
    expect(top.defects).toBe(n(`select count(distinct d.id) ${live} and t.code = ? and dc.confidence = 'confirmed'`, top.code));

    // The same tag as a filter of another report: the affected slabs are those with a live tagging.
    const ov = await quality.get(`/api/reports/overview?cause=${top.code}&period=month`);
    expect(ov.body.totals.affected).toBe(n(`select count(distinct d.slab_id) ${live} and t.code = ?`, top.code));

    const xlsx = await quality
      .get("/api/reports/cause-pareto.xlsx?minConfidence=suspected")
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on("data", (c: Buffer) => chunks.push(c));
        r.on("end", () => cb(null, Buffer.concat(chunks)));
      });
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(xlsx.body as Buffer as never);
    const sheet = wb.getWorksheet("Causes")!;
    const rows = Array.from({ length: sheet.rowCount - 1 }, (_, i) => ({
      code: sheet.getRow(i + 2).getCell(1).value,
      defects: sheet.getRow(i + 2).getCell(4).value,
      share: sheet.getRow(i + 2).getCell(9).value,
    }));
    expect(rows).toEqual(body.rows.map((r) => ({ code: r.code, defects: r.defects, share: r.share })));
    expect(sheet.views[0]).toMatchObject({ state: "frozen", ySplit: 1 });
  });
});
